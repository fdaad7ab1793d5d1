// `npm start`: provisions MariaDB, the object store and the mail catcher on loopback (data under
// .data/), migrates, seeds the demo workshop, builds when the sources changed, and serves the app.
import { spawn } from 'node:child_process'
import { mkdirSync } from 'node:fs'
import { join } from 'node:path'
import { done, fail, httpOk, step, waitFor } from './lib/proc'
import {
  ROOT, buildApp, buildIsStale, runScript, stackEnv, startDatabase, startMailCatcher, startObjectStore, startProfile,
  stopDatabase, stopMailCatcher, stopObjectStore,
} from './lib/stack'

const startedAt = Date.now()
const profile = startProfile()
mkdirSync(profile.dataDir, { recursive: true })

let app: ReturnType<typeof spawn> | undefined
let stopping = false
async function shutdown(code: number) {
  if (stopping) return
  stopping = true
  console.log('\n▸ stopping Benchlore…')
  if (app && app.exitCode === null) {
    app.kill('SIGTERM')
    await new Promise(r => app!.once('exit', r))
  }
  await Promise.all([stopMailCatcher(profile), stopObjectStore(profile)])
  await stopDatabase(profile)
  done('everything that was started is stopped (MariaDB shut down cleanly)')
  process.exit(code)
}
process.on('SIGINT', () => void shutdown(0))
process.on('SIGTERM', () => void shutdown(0))

try {
  await Promise.all([startDatabase(profile), startObjectStore(profile), startMailCatcher(profile)])
  step('database: applying migrations…')
  await runScript(profile, 'scripts/migrate.ts')
  step('demo workshop: seeding (idempotent)…')
  await runScript(profile, 'scripts/seed.ts')
  if (buildIsStale()) await buildApp()
  else done('app build is up to date')

  const t = Date.now()
  step(`app: starting on http://127.0.0.1:${profile.ports.app}…`)
  app = spawn(process.execPath, [join(ROOT, '.output', 'server', 'index.mjs')], { cwd: ROOT, env: stackEnv(profile), stdio: 'inherit' })
  app.on('exit', (code) => {
    if (!stopping) {
      console.error(`✗ the app exited (${code}); stopping the services`)
      void shutdown(1)
    }
  })
  await waitFor('app', () => httpOk(`http://127.0.0.1:${profile.ports.app}/api/health`), 60_000, 150)
  done('app answering', t)
  console.log(`
Benchlore is running at http://127.0.0.1:${profile.ports.app}   (ready in ${((Date.now() - startedAt) / 1000).toFixed(1)} s)

Demo accounts (demo only; password for all: bench-demo-2026)
  admin@harbourlane.example    admin
  editor@harbourlane.example   editor
  author@harbourlane.example   author
  tech@harbourlane.example     technician

Mail sent by the app is kept in .data/mail/ and readable by admins at /admin/mail.
Press Ctrl-C to stop everything.`)
}
catch (error) {
  console.error(`✗ ${(error as Error).message}`)
  await shutdown(1)
  fail('start-up failed')
}
