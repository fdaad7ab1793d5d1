import { existsSync, readdirSync, readFileSync } from 'node:fs'
import { join } from 'node:path'
import { setTimeout as sleep } from 'node:timers/promises'
import { readPid } from '../../scripts/lib/proc'
import { appFiles, startDatabase, startMailCatcher, startObjectStore, stopDatabase, stopMailCatcher, stopObjectStore, testProfile } from '../../scripts/lib/stack'

/** Start and stop the test stack's services from a test (outage and recovery tests). */
export const services = {
  profile: testProfile(),
  stopDatabase: () => stopDatabase(testProfile()),
  startDatabase: () => startDatabase(testProfile()),
  stopObjectStore: () => stopObjectStore(testProfile()),
  startObjectStore: () => startObjectStore(testProfile()),
  stopMail: () => stopMailCatcher(testProfile()),
  startMail: () => startMailCatcher(testProfile()),
  /** The process id of the app under test (to tell that it was not restarted). */
  appPid: () => readPid(appFiles(testProfile()).pid),
}

export interface CapturedMessage { id: string, to: string[], subject: string, text: string, html: string | null, receivedAt: string }

export function capturedMail(): CapturedMessage[] {
  const dir = process.env.NUXT_MAIL_CAPTURE_DIR ?? join(testProfile().dataDir, 'mail')
  if (!existsSync(dir)) return []
  return readdirSync(dir).filter(n => n.endsWith('.json')).sort().map(n => JSON.parse(readFileSync(join(dir, n), 'utf8')) as CapturedMessage)
}

/** Waits for a message to arrive at the mail catcher (the outbox worker sends every ~second). */
export async function waitForMail(match: (m: CapturedMessage) => boolean, timeoutMs = 20_000): Promise<CapturedMessage> {
  const until = Date.now() + timeoutMs
  while (Date.now() < until) {
    const found = capturedMail().find(match)
    if (found) return found
    await sleep(200)
  }
  throw new Error('expected mail did not arrive in time')
}

export async function waitUntil(what: string, check: () => Promise<boolean> | boolean, timeoutMs = 15_000, intervalMs = 200): Promise<number> {
  const started = Date.now()
  while (Date.now() - started < timeoutMs) {
    if (await check()) return Date.now() - started
    await sleep(intervalMs)
  }
  throw new Error(`${what} did not happen within ${timeoutMs} ms`)
}
