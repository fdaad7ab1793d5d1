import { existsSync, readFileSync } from 'node:fs'
import { join } from 'node:path'
import { describe, expect, it } from 'vitest'

// The contributor guide is read by newcomers as a map: every path it names in backticks must
// lead somewhere. A path is a backticked token that starts at a top-level folder of the project.
const ROOT = join(import.meta.dirname, '../..')
const TOP = ['app/', 'server/', 'shared/', 'scripts/', 'tests/', 'service-worker/', 'public/', '.ci/']

function namedPaths(markdown: string): string[] {
  const paths = new Set<string>()
  for (const [, token] of markdown.matchAll(/`([^`\s]+)`/g)) {
    if (!TOP.some(top => token!.startsWith(top))) continue
    // `server/api/**/name.<method>.ts` and `NNNN-what.ts` describe patterns, not files.
    if (/[<>*{}]|NNNN/.test(token!)) continue
    paths.add(token!.replace(/[.,:;)]+$/, ''))
  }
  return [...paths]
}

describe('DEVELOPERS.md', () => {
  const guide = readFileSync(join(ROOT, 'DEVELOPERS.md'), 'utf8')

  it('finds the paths it is meant to check', () => {
    const paths = namedPaths('see `server/db/lease.ts`, `app/pages/` and `tests/api/*.test.ts` or `npm test`')
    expect(paths).toEqual(['server/db/lease.ts', 'app/pages/'])
  })

  it('names only paths that exist', () => {
    const paths = namedPaths(guide)
    expect(paths.length).toBeGreaterThan(40)
    expect(paths.filter(p => !existsSync(join(ROOT, p)))).toEqual([])
  })
})
