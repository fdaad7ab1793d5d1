import { spawn, type ChildProcess } from 'node:child_process'
import { join } from 'node:path'
import { closeSync, existsSync, openSync, readFileSync, rmSync, writeFileSync } from 'node:fs'
import { createConnection } from 'node:net'
import { setTimeout as sleep } from 'node:timers/promises'

export const step = (text: string) => console.log(`▸ ${text}`)
export const done = (text: string, startedAt?: number) =>
  console.log(`✓ ${text}${startedAt ? ` (${((Date.now() - startedAt) / 1000).toFixed(1)} s)` : ''}`)
export const fail = (text: string): never => {
  console.error(`✗ ${text}`)
  process.exit(1)
}

export function isAlive(pid: number): boolean {
  try {
    process.kill(pid, 0)
    return true
  }
  catch {
    return false
  }
}

export function readPid(pidFile: string): number | null {
  if (!existsSync(pidFile)) return null
  const pid = Number(readFileSync(pidFile, 'utf8').trim())
  return Number.isInteger(pid) && pid > 0 && isAlive(pid) ? pid : null
}

/**
 * Starts a long-running service in its own process group (so a terminal Ctrl-C reaches only
 * the orchestrator, which then stops the services in order) with its output in a log file.
 */
export function startDetached(command: string, args: string[], opts: { logFile: string, pidFile?: string, env?: NodeJS.ProcessEnv, cwd?: string }): ChildProcess {
  const out = openSync(opts.logFile, 'a')
  const child = spawn(command, args, {
    cwd: opts.cwd,
    env: opts.env ?? process.env,
    detached: true,
    stdio: ['ignore', out, out],
  })
  closeSync(out)
  child.unref()
  if (opts.pidFile && child.pid) writeFileSync(opts.pidFile, String(child.pid))
  return child
}

/** SIGTERM, then wait for the process to be gone (SIGKILL after the grace period). */
export async function stopPid(pid: number | null | undefined, graceMs = 15_000): Promise<void> {
  if (!pid || !isAlive(pid)) return
  try {
    process.kill(pid, 'SIGTERM')
  }
  catch {
    return
  }
  const until = Date.now() + graceMs
  while (isAlive(pid) && Date.now() < until) await sleep(50)
  if (isAlive(pid)) {
    try {
      process.kill(pid, 'SIGKILL')
    }
    catch { /* gone meanwhile */ }
  }
}

export async function stopPidFile(pidFile: string, graceMs?: number): Promise<void> {
  await stopPid(readPid(pidFile), graceMs)
  rmSync(pidFile, { force: true })
}

export function portOpen(port: number, host = '127.0.0.1'): Promise<boolean> {
  return new Promise((resolve) => {
    const socket = createConnection({ port, host })
    socket.once('connect', () => {
      socket.destroy()
      resolve(true)
    })
    socket.once('error', () => resolve(false))
  })
}

export async function waitFor(what: string, check: () => Promise<boolean>, timeoutMs: number, intervalMs = 100): Promise<void> {
  const until = Date.now() + timeoutMs
  while (Date.now() < until) {
    if (await check().catch(() => false)) return
    await sleep(intervalMs)
  }
  throw new Error(`${what} did not become ready within ${Math.round(timeoutMs / 1000)} s`)
}

export async function httpOk(url: string): Promise<boolean> {
  try {
    const res = await fetch(url, { signal: AbortSignal.timeout(2000) })
    return res.ok
  }
  catch {
    return false
  }
}

/** Runs the project's vitest with these arguments in the foreground; resolves with its exit code. */
export function runVitest(root: string, args: string[], env: NodeJS.ProcessEnv): Promise<number> {
  return new Promise<number>((resolve) => {
    const child = spawn(join(root, 'node_modules', '.bin', 'vitest'), args, { cwd: root, env, stdio: 'inherit' })
    child.on('exit', c => resolve(c ?? 1))
  })
}
