import { randomBytes } from 'node:crypto'
import { existsSync, mkdirSync, readdirSync, readFileSync, statSync, writeFileSync } from 'node:fs'
import { join, resolve } from 'node:path'
import { ensureDatabase, ensureMariadbInstalled, recreateDatabase, startMariadb, stopMariadb, type LocalMariadb } from './mariadb'
import { done, httpOk, portOpen, readPid, startDetached, step, stopPidFile, waitFor } from './proc'

export const ROOT = resolve(import.meta.dirname, '..', '..')

/** Where one stack (the `npm start` one or the `npm test` one) keeps its data and listens. */
export interface StackProfile {
  name: 'start' | 'test'
  dataDir: string
  ports: { app: number, db: number, s3: number, smtp: number }
}

const num = (v: string | undefined, fallback: number) => (v && /^\d+$/.test(v) ? Number(v) : fallback)

export function startProfile(): StackProfile {
  return {
    name: 'start',
    dataDir: join(ROOT, '.data'),
    ports: {
      app: num(process.env.BENCHLORE_PORT, 3000),
      db: num(process.env.BENCHLORE_DB_PORT, 3307),
      s3: num(process.env.BENCHLORE_S3_PORT, 4568),
      smtp: num(process.env.BENCHLORE_SMTP_PORT, 2525),
    },
  }
}

/**
 * Several checkouts of the project on one machine (git worktrees) can run their test and bench
 * stacks side by side: BENCHLORE_PORT_OFFSET moves every port of those stacks by that much.
 */
const portOffset = () => num(process.env.BENCHLORE_PORT_OFFSET, 0)

export function testProfile(): StackProfile {
  const o = portOffset()
  return {
    name: 'test',
    dataDir: join(ROOT, '.data-test'),
    ports: { app: 3100 + o, db: 3317 + o, s3: 4578 + o, smtp: 2535 + o },
  }
}

/** Benchmarks get a throw-away stack of their own, like the tests. */
export function benchProfile(): StackProfile {
  const o = portOffset()
  return {
    name: 'test',
    dataDir: join(ROOT, '.data-bench'),
    ports: { app: 3200 + o, db: 3327 + o, s3: 4588 + o, smtp: 2545 + o },
  }
}

/** Which services are external (configured by the operator through env vars) and so not started. */
export function externalServices() {
  // Services a stack started itself are marked in the environment it hands to its children
  // (tests, scripts), so that they are not mistaken for an operator's external ones.
  const own = (process.env.BENCHLORE_OWN_SERVICES ?? '').split(',')
  return {
    db: Boolean(process.env.NUXT_DB_HOST) && !own.includes('db'),
    s3: Boolean(process.env.NUXT_S3_ENDPOINT) && !own.includes('s3'),
    smtp: Boolean(process.env.NUXT_SMTP_HOST) && !own.includes('smtp'),
  }
}

interface Secrets { dbPassword: string, sessionPassword: string }

function loadSecrets(profile: StackProfile): Secrets {
  const file = join(profile.dataDir, 'secrets.json')
  if (existsSync(file)) return JSON.parse(readFileSync(file, 'utf8')) as Secrets
  const secrets: Secrets = {
    dbPassword: randomBytes(18).toString('base64url'),
    sessionPassword: randomBytes(36).toString('base64url'),
  }
  mkdirSync(profile.dataDir, { recursive: true })
  writeFileSync(file, JSON.stringify(secrets, null, 2), { mode: 0o600 })
  return secrets
}

export const DB_NAME = 'benchlore'
export const DB_USER = 'benchlore'
export const BUCKET = 'benchlore'

/**
 * The environment the app, the migrations and the seed run with. Anything the operator set
 * (NUXT_*) wins over the local defaults, so an external MariaDB / S3 / SMTP is used as given.
 */
export function stackEnv(profile: StackProfile): NodeJS.ProcessEnv {
  const secrets = loadSecrets(profile)
  const origin = `http://127.0.0.1:${profile.ports.app}`
  const local: Record<string, string> = {
    NUXT_DB_HOST: '127.0.0.1',
    NUXT_DB_PORT: String(profile.ports.db),
    NUXT_DB_NAME: DB_NAME,
    NUXT_DB_USER: DB_USER,
    NUXT_DB_PASSWORD: secrets.dbPassword,
    NUXT_S3_ENDPOINT: `http://127.0.0.1:${profile.ports.s3}`,
    NUXT_S3_REGION: 'us-east-1',
    NUXT_S3_BUCKET: BUCKET,
    NUXT_S3_ACCESS_KEY_ID: 'S3RVER',
    NUXT_S3_SECRET_ACCESS_KEY: 'S3RVER',
    NUXT_S3_FORCE_PATH_STYLE: 'true',
    NUXT_SMTP_HOST: '127.0.0.1',
    NUXT_SMTP_PORT: String(profile.ports.smtp),
    NUXT_SMTP_SECURE: 'false',
    NUXT_MAIL_FROM: 'Benchlore <benchlore@harbourlane.example>',
    NUXT_MAIL_CAPTURE_DIR: join(profile.dataDir, 'mail'),
    NUXT_SESSION_PASSWORD: secrets.sessionPassword,
    NUXT_APP_ORIGIN: origin,
  }
  const ext = externalServices()
  const env: NodeJS.ProcessEnv = { ...process.env }
  for (const [k, v] of Object.entries(local)) {
    const group = k.startsWith('NUXT_DB_') ? 'db' : k.startsWith('NUXT_S3_') ? 's3' : k.startsWith('NUXT_SMTP_') || k === 'NUXT_MAIL_CAPTURE_DIR' ? 'smtp' : null
    if (group && ext[group]) continue
    if (env[k] === undefined || env[k] === '') env[k] = v
  }
  env.BENCHLORE_OWN_SERVICES = (['db', 's3', 'smtp'] as const).filter(k => !ext[k]).join(',')
  env.NITRO_HOST = '127.0.0.1'
  env.NITRO_PORT = String(profile.ports.app)
  env.PORT = String(profile.ports.app)
  return env
}

export function dbHandle(profile: StackProfile): LocalMariadb {
  return { dir: join(profile.dataDir, 'mariadb'), port: profile.ports.db }
}

const tsxNode = (script: string) => [process.execPath, ['--import', 'tsx', join(ROOT, script)]] as const

export async function startDatabase(profile: StackProfile, opts: { fresh?: boolean } = {}) {
  if (externalServices().db) {
    done(`MariaDB: using the external server at ${process.env.NUXT_DB_HOST}:${process.env.NUXT_DB_PORT ?? 3306}`)
    return
  }
  ensureMariadbInstalled()
  const t = Date.now()
  step(`MariaDB: starting on 127.0.0.1:${profile.ports.db}…`)
  const db = dbHandle(profile)
  await startMariadb(db)
  if (opts.fresh) recreateDatabase(db, DB_NAME)
  ensureDatabase(db, DB_NAME, DB_USER, loadSecrets(profile).dbPassword)
  done(`MariaDB ready on 127.0.0.1:${profile.ports.db}, database "${DB_NAME}"`, t)
}

export function objectStoreFiles(profile: StackProfile) {
  return { dir: join(profile.dataDir, 's3'), pid: join(profile.dataDir, 's3.pid'), log: join(profile.dataDir, 's3.log') }
}

export async function startObjectStore(profile: StackProfile) {
  if (externalServices().s3) {
    done(`object store: using ${process.env.NUXT_S3_ENDPOINT}`)
    return
  }
  const f = objectStoreFiles(profile)
  if (readPid(f.pid) && await portOpen(profile.ports.s3)) return
  const t = Date.now()
  mkdirSync(f.dir, { recursive: true })
  const [cmd, args] = tsxNode('scripts/fakes/object-store.ts')
  startDetached(cmd, [...args, f.dir, String(profile.ports.s3), BUCKET], { logFile: f.log, pidFile: f.pid, cwd: ROOT })
  await waitFor('object store', () => portOpen(profile.ports.s3), 20_000)
  done(`object store (s3rver) on 127.0.0.1:${profile.ports.s3}, bucket "${BUCKET}"`, t)
}

export function mailFiles(profile: StackProfile) {
  return { dir: join(profile.dataDir, 'mail'), pid: join(profile.dataDir, 'mail.pid'), log: join(profile.dataDir, 'mail.log') }
}

export async function startMailCatcher(profile: StackProfile) {
  if (externalServices().smtp) {
    done(`mail: using the SMTP server at ${process.env.NUXT_SMTP_HOST}`)
    return
  }
  const f = mailFiles(profile)
  if (readPid(f.pid) && await portOpen(profile.ports.smtp)) return
  const t = Date.now()
  const [cmd, args] = tsxNode('scripts/fakes/mail.ts')
  startDetached(cmd, [...args, f.dir, String(profile.ports.smtp)], { logFile: f.log, pidFile: f.pid, cwd: ROOT })
  await waitFor('mail catcher', () => portOpen(profile.ports.smtp), 20_000)
  done(`mail catcher on 127.0.0.1:${profile.ports.smtp}, messages kept in ${f.dir}`, t)
}

export async function stopObjectStore(profile: StackProfile) {
  await stopPidFile(objectStoreFiles(profile).pid)
}
export async function stopMailCatcher(profile: StackProfile) {
  await stopPidFile(mailFiles(profile).pid)
}
export async function stopDatabase(profile: StackProfile) {
  if (!externalServices().db) await stopMariadb(dbHandle(profile))
}

/** Runs a TypeScript script of the project (migrate, seed) against the stack, output inline. */
export async function runScript(profile: StackProfile, script: string, args: string[] = []): Promise<void> {
  const { spawn } = await import('node:child_process')
  const [cmd, base] = tsxNode(script)
  await new Promise<void>((res, rej) => {
    const child = spawn(cmd, [...base, ...args], { cwd: ROOT, env: stackEnv(profile), stdio: 'inherit' })
    child.on('exit', code => (code === 0 ? res() : rej(new Error(`${script} exited with ${code}`))))
  })
}

const SOURCES = ['app', 'server', 'shared', 'public', 'nuxt.config.ts', 'tailwind.config.ts', 'package-lock.json', 'app.config.ts']

function newestMtime(path: string): number {
  if (!existsSync(path)) return 0
  const s = statSync(path)
  if (!s.isDirectory()) return s.mtimeMs
  let newest = s.mtimeMs
  for (const entry of readdirSync(path)) newest = Math.max(newest, newestMtime(join(path, entry)))
  return newest
}

export function buildIsStale(): boolean {
  const marker = join(ROOT, '.output', 'nitro.json')
  if (!existsSync(marker)) return true
  const built = statSync(marker).mtimeMs
  return SOURCES.some(s => newestMtime(join(ROOT, s)) > built)
}

export async function buildApp(): Promise<void> {
  const { spawn } = await import('node:child_process')
  const t = Date.now()
  step('app: building (nuxt build)…')
  await new Promise<void>((res, rej) => {
    const child = spawn(join(ROOT, 'node_modules', '.bin', 'nuxt'), ['build'], { cwd: ROOT, stdio: ['ignore', 'pipe', 'pipe'], env: { ...process.env, NODE_ENV: 'production' } })
    let output = ''
    child.stdout.on('data', (d: Buffer) => (output += d))
    child.stderr.on('data', (d: Buffer) => (output += d))
    child.on('exit', (code) => {
      if (code === 0) res()
      else {
        console.error(output)
        rej(new Error('nuxt build failed'))
      }
    })
  })
  done('app built', t)
}

export function appFiles(profile: StackProfile, instance = 'app') {
  return { pid: join(profile.dataDir, `${instance}.pid`), log: join(profile.dataDir, `${instance}.log`) }
}

/** Starts the built server (one instance) and waits for /api/health to answer. */
export async function startApp(profile: StackProfile, opts: { port?: number, instance?: string, env?: NodeJS.ProcessEnv } = {}) {
  const port = opts.port ?? profile.ports.app
  const f = appFiles(profile, opts.instance)
  const env = { ...stackEnv(profile), ...opts.env, NITRO_PORT: String(port), PORT: String(port) }
  startDetached(process.execPath, [join(ROOT, '.output', 'server', 'index.mjs')], { logFile: f.log, pidFile: f.pid, env, cwd: ROOT })
  await waitFor(`app on port ${port}`, () => httpOk(`http://127.0.0.1:${port}/api/health`), 60_000, 150)
}

export async function stopApp(profile: StackProfile, instance = 'app') {
  await stopPidFile(appFiles(profile, instance).pid)
}
