import { existsSync } from 'node:fs'
import { readdir, readFile } from 'node:fs/promises'
import { join } from 'node:path'
import type { CapturedMailDto, CapturedMailSummaryDto } from '../../../shared/types/mail'

// The messages the local mail catcher kept (development and demo only: NUXT_MAIL_CAPTURE_DIR),
// shown to admins so a demo can follow invitations and review mail without a real mailbox.
const ID = /^[\w.-]{1,120}$/

export async function listCapturedMail(dir: string, limit = 200): Promise<CapturedMailSummaryDto[]> {
  if (!dir || !existsSync(dir)) return []
  const names = (await readdir(dir)).filter(n => n.endsWith('.json')).sort().reverse().slice(0, limit)
  const items = await Promise.all(names.map(async (n) => {
    try {
      const m = JSON.parse(await readFile(join(dir, n), 'utf8')) as CapturedMailDto
      return { id: m.id, receivedAt: m.receivedAt, from: m.from, to: m.to, subject: m.subject, preview: m.text.slice(0, 160) }
    }
    catch {
      return null
    }
  }))
  return items.filter(i => i !== null)
}

export async function readCapturedMail(dir: string, id: string): Promise<CapturedMailDto | null> {
  if (!dir || !ID.test(id)) return null
  const file = join(dir, `${id}.json`)
  if (!existsSync(file)) return null
  return JSON.parse(await readFile(file, 'utf8')) as CapturedMailDto
}
