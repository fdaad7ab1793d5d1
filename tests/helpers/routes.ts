import { readdirSync, statSync } from 'node:fs'
import { join, relative, sep } from 'node:path'

export interface ApiRoute {
  method: 'GET' | 'POST' | 'PUT' | 'PATCH' | 'DELETE'
  /** e.g. /api/users/:id */
  path: string
  file: string
}

/** Every route file under server/api, as method + path (catch-alls without a method are left out). */
export function listApiRoutes(root = join(process.cwd(), 'server', 'api')): ApiRoute[] {
  const out: ApiRoute[] = []
  const walk = (dir: string) => {
    for (const name of readdirSync(dir)) {
      const full = join(dir, name)
      if (statSync(full).isDirectory()) {
        walk(full)
        continue
      }
      const m = name.match(/^(.*)\.(get|post|put|patch|delete)\.ts$/)
      if (!m) continue
      const rel = relative(root, join(dir, m[1]!)).split(sep)
      const segments = rel.filter((s, i) => !(s === 'index' && i === rel.length - 1)).map(s => s.replace(/^\[(?:\.\.\.)?(.+)\]$/, ':$1'))
      out.push({ method: m[2]!.toUpperCase() as ApiRoute['method'], path: `/api/${segments.join('/')}`.replace(/\/$/, ''), file: relative(process.cwd(), full) })
    }
  }
  walk(root)
  return out.sort((a, b) => (a.path + a.method).localeCompare(b.path + b.method))
}

export const routeKey = (r: Pick<ApiRoute, 'method' | 'path'>) => `${r.method} ${r.path}`
