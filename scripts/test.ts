// `npm test`: the same services as `npm start`, on their own ports and a throw-away data folder
// (.data-test/, never .data/), a fresh database, then every vitest project. Exit code = result.
import { spawnSync } from 'node:child_process'
import { existsSync, mkdirSync, readFileSync, rmSync } from 'node:fs'
import { join } from 'node:path'
import { done, fail, runVitest, step } from './lib/proc'
import {
  ROOT, appFiles, buildApp, buildIsStale, runScript, stackEnv, startApp, startDatabase, startMailCatcher, startObjectStore,
  stopApp, stopDatabase, stopMailCatcher, stopObjectStore, testProfile,
} from './lib/stack'

const startedAt = Date.now()
const profile = testProfile()
// A test run needs its own services: an operator's external settings must not leak into it.
for (const k of Object.keys(process.env)) if (/^NUXT_(DB|S3|SMTP|MAIL)_/.test(k)) delete process.env[k]

async function stopAll() {
  await Promise.all([stopApp(profile), stopApp(profile, 'app-b')])
  await Promise.all([stopMailCatcher(profile), stopObjectStore(profile)])
  await stopDatabase(profile)
}

function ensureChromium() {
  if (existsSync('/usr/bin/chromium')) return
  if (process.getuid?.() !== 0) fail('Chromium is needed for the browser tests: sudo apt-get install chromium')
  step('browser tests: installing Debian\'s chromium (once)…')
  const env = { ...process.env, DEBIAN_FRONTEND: 'noninteractive' }
  spawnSync('apt-get', ['update'], { stdio: 'inherit', env })
  const r = spawnSync('apt-get', ['install', '-y', '--no-install-recommends', 'chromium'], { stdio: 'inherit', env })
  if (r.status !== 0) fail('apt-get could not install chromium')
}

// Faster mail retries and polling than production, so outage tests finish in seconds.
const TEST_APP_ENV = { NUXT_MAIL_POLL_MS: '500', NUXT_MAIL_RETRY_BASE_MS: '1000' }

/**
 * After a failed run, what the servers themselves said: the app's unhandled errors (an API 500
 * answers only "the error was logged") and any deadlock MariaDB reported. CI keeps the console
 * output, not .data-test/, so this is what there is to read afterwards.
 */
function printServerErrors() {
  const read = (file: string) => existsSync(file) ? readFileSync(file, 'utf8').split('\n') : []
  const sections: string[] = []
  for (const instance of ['app', 'app-b']) {
    const lines = read(appFiles(profile, instance).log)
    lines.forEach((line, i) => {
      if (line.includes('[benchlore] unhandled error')) sections.push(`${instance}.log:\n${lines.slice(i, i + 14).join('\n')}`)
    })
  }
  const db = read(join(profile.dataDir, 'mariadb', 'error.log'))
  db.forEach((line, i) => {
    if (!line.includes('deadlock detected')) return
    // The statements and the locks, without the hex dump of each locked record's fields.
    const end = db.findIndex((l, j) => j > i && l.includes('WE ROLL BACK TRANSACTION'))
    const dump = db.slice(i, end < 0 ? i + 80 : end + 1).filter(l => l.trim() && !/^ *\d+: (len|SQL NULL)/.test(l))
    sections.push(`mariadb error.log (the tests provoke one deadlock on purpose in tests/api/transactions.test.ts):\n${dump.join('\n')}`)
  })
  if (!sections.length) return
  console.error(`\n▸ what the servers logged (${sections.length} entr${sections.length === 1 ? 'y' : 'ies'}, the last 8 shown):`)
  for (const s of sections.slice(-8)) console.error(`${s}\n`)
}

/**
 * The house style and the types, before any suite: a full run fails on either. A run of chosen
 * files (`npm test -- tests/api/x.test.ts`) skips them to stay quick while editing.
 */
function checkStyleAndTypes() {
  if (process.argv.length > 2) {
    done('lint and typecheck skipped: this run names its test files')
    return
  }
  for (const [what, args] of [['lint (eslint)', ['eslint', '.']], ['typecheck (nuxt typecheck)', ['nuxt', 'typecheck']]] as const) {
    const t = Date.now()
    step(`${what}…`)
    const r = spawnSync(join(ROOT, 'node_modules', '.bin', args[0]), args.slice(1), { cwd: ROOT, stdio: 'inherit' })
    if (r.status !== 0) throw new Error(`${what} failed; see the output above`)
    done(`${what} passed`, t)
  }
}

let code = 1
process.on('SIGINT', () => void stopAll().then(() => process.exit(130)))
process.on('SIGTERM', () => void stopAll().then(() => process.exit(143)))
try {
  await stopAll() // leftovers of an interrupted earlier run
  rmSync(profile.dataDir, { recursive: true, force: true })
  mkdirSync(profile.dataDir, { recursive: true })
  ensureChromium()
  checkStyleAndTypes()
  await Promise.all([startDatabase(profile, { fresh: true }), startObjectStore(profile), startMailCatcher(profile)])
  step('database: applying migrations to the empty test database…')
  await runScript(profile, 'scripts/migrate.ts')
  step('demo workshop: seeding the test database…')
  await runScript(profile, 'scripts/seed.ts')
  if (buildIsStale()) await buildApp()
  else done('app build is up to date')
  step(`app: starting the test instance on http://127.0.0.1:${profile.ports.app}…`)
  await startApp(profile, { env: TEST_APP_ENV })
  done('test stack ready', startedAt)

  const tmp = join(profile.dataDir, 'tmp')
  mkdirSync(tmp, { recursive: true })
  const env = {
    ...stackEnv(profile),
    TMPDIR: tmp,
    BENCHLORE_TEST: '1',
    BENCHLORE_BASE_URL: `http://127.0.0.1:${profile.ports.app}`,
    BENCHLORE_ARTIFACTS: join(ROOT, 'test-results'),
    ...TEST_APP_ENV,
  }
  code = await runVitest(ROOT, ['run', ...process.argv.slice(2)], env)
  if (code !== 0) printServerErrors()
}
catch (error) {
  console.error(`✗ ${(error as Error).message}`)
  code = 1
}
finally {
  step('stopping the test services…')
  await stopAll()
  done(`test run finished in ${((Date.now() - startedAt) / 1000).toFixed(0)} s, exit code ${code}`)
}
process.exit(code)
