import { existsSync } from 'node:fs'
import { readdir, readFile } from 'node:fs/promises'
import { join } from 'node:path'

/** A message kept by the local mail catcher (development and demo only). */
export interface CapturedMail {
  id: string
  receivedAt: string
  from: string
  to: string[]
  subject: string
  text: string
}

const ID = /^[\w.-]{1,120}$/

export async function listCapturedMail(dir: string, limit = 200): Promise<Array<Omit<CapturedMail, 'text'> & { preview: string }>> {
  if (!dir || !existsSync(dir)) return []
  const names = (await readdir(dir)).filter(n => n.endsWith('.json')).sort().reverse().slice(0, limit)
  const items = await Promise.all(names.map(async (n) => {
    try {
      const m = JSON.parse(await readFile(join(dir, n), 'utf8')) as CapturedMail
      return { id: m.id, receivedAt: m.receivedAt, from: m.from, to: m.to, subject: m.subject, preview: m.text.slice(0, 160) }
    }
    catch {
      return null
    }
  }))
  return items.filter(i => i !== null)
}

export async function readCapturedMail(dir: string, id: string): Promise<CapturedMail | null> {
  if (!dir || !ID.test(id)) return null
  const file = join(dir, `${id}.json`)
  if (!existsSync(file)) return null
  return JSON.parse(await readFile(file, 'utf8')) as CapturedMail
}
