// npm run bench:http [-- --duration N] [-- --build] — the built app (.output) on the bench stack
// (fresh MariaDB, object store and mail catcher under .data-bench/, demo workshop seeded), signed in as the demo
// technician, measured with autocannon in one run, side by side with a bare node:http server:
//   1. GET /api/procedures/<slug> req/s ≥ 25 % of the bare server's (same connections, same duration)
//   2. SSR /procedures/<slug>: p95 ≤ 80 ms at 10 connections
//   3. mixed read/search load, 50 connections for N s (default 60): 0 errors, p99 ≤ 250 ms
// plus two references from the same run: GET /api/me (the per-request session check alone) and
// the SSR of the public /login page (the smallest page), the floors under targets 1 and 2.
// Latency percentiles are computed from every response time autocannon reports (its `response`
// event), so p95 is exact rather than read from autocannon's fixed percentile list.
// Ratios measured in the same run matter more than absolute figures on a shared 2-core machine.
import { existsSync, readFileSync, statSync } from 'node:fs'
import { createRequire } from 'node:module'
import os from 'node:os'
import { join } from 'node:path'
import { parseArgs } from 'node:util'
import { Procedure, RepairRecord, User } from '../../server/db'
import { seedDemo } from '../seed/demo'
import { ObjectStore, s3ConfigFromEnv } from '../../server/services/storage'
import { openBenchDatabase, percentile } from '../lib/bench-stack'
import { done, portOpen, startDetached, step, stopPidFile, waitFor } from '../lib/proc'
import { ROOT, appFiles, benchProfile, buildApp, buildIsStale, startApp, startMailCatcher, stopApp, stopDatabase, stopMailCatcher, stopObjectStore } from '../lib/stack'

// ── autocannon 9 ships no types: the part of its API used here ────────────────────────────────
interface AcRequest { method?: string, path: string, headers?: Record<string, string>, onResponse?: (status: number, body: string) => void }
interface AcClient { setRequests: (requests: AcRequest[]) => void }
interface AcResult { duration: number, errors: number, timeouts: number, non2xx: number, statusCodeStats: Record<string, { count: number }>, requests: { total: number, sent: number } }
interface AcInstance extends PromiseLike<AcResult> {
  on: (event: 'response', listener: (client: AcClient, status: number, bytes: number, ms: number) => void) => void
  stop: () => void
}
interface AcOptions { url: string, connections: number, duration: number, headers?: Record<string, string>, requests?: AcRequest[], setupClient?: (client: AcClient) => void, timeout?: number }
const autocannon = createRequire(import.meta.url)('autocannon') as (opts: AcOptions) => AcInstance

// ── settings ──────────────────────────────────────────────────────────────────────────────────
const { values: args } = parseArgs({ options: { duration: { type: 'string', default: '60' }, build: { type: 'boolean', default: false } } })
const LOAD_SECONDS = Number(args.duration)
if (!Number.isInteger(LOAD_SECONDS) || LOAD_SECONDS < 1) throw new Error(`--duration must be a whole number of seconds, got "${args.duration}"`)
const PHASE_SECONDS = Math.min(20, LOAD_SECONDS) // targets 1 and 2; bare and API runs get the same
const WARM_SECONDS = 3
const PAIR_CONNECTIONS = 10
const SSR_CONNECTIONS = 10
const LOAD_CONNECTIONS = 50
const DEMO_EMAIL = 'tech@harbourlane.example'
const DEMO_PASSWORD = 'bench-demo-2026'

const profile = benchProfile()
const APP_PORT = profile.ports.app
const BARE_PORT = profile.ports.app + 9
const APP = `http://127.0.0.1:${APP_PORT}`
const bareFiles = { pid: join(profile.dataDir, 'bare-http.pid'), log: join(profile.dataDir, 'bare-http.log') }

// ── everything started here is stopped here, once, on success, failure or Ctrl-C ───────────────
let bench: Awaited<ReturnType<typeof openBenchDatabase>> | undefined
let running: AcInstance | undefined
let cleaning: Promise<void> | undefined
let interrupted = false
function cleanup(): Promise<void> {
  cleaning ??= (async () => {
    running?.stop()
    await stopApp(profile)
    await stopPidFile(bareFiles.pid)
    await stopMailCatcher(profile)
    if (bench) await bench.stop()
    else {
      await stopObjectStore(profile)
      await stopDatabase(profile)
    }
  })()
  return cleaning
}
/** Between steps: after Ctrl-C, go straight to the clean-up in `finally`. */
function checkpoint() {
  if (interrupted) throw new Error('interrupted')
}
// First Ctrl-C: the current autocannon run stops and the next checkpoint leads to `finally`, so
// whatever is being started (MariaDB, the app) is stopped once it is up. A second one stops now.
for (const signal of ['SIGINT', 'SIGTERM'] as const) {
  process.on(signal, () => {
    if (!interrupted) {
      interrupted = true
      console.log(`\n▸ ${signal}: stopping the app, the bare server, the mail catcher, MariaDB and the object store…`)
      running?.stop()
      return
    }
    void cleanup().finally(() => process.exit(130))
  })
}

// ── one autocannon run, every response time kept (per request label for the mix) ──────────────
interface Run { seconds: number, connections: number, reqPerSec: number, total: number, non2xx: number, errors: number, timeouts: number, codes: string, ms: number[], byLabel: Map<string, { ms: number[], non2xx: number }>, load1: number }

const labelOf = (path: string) => path.split('?')[0]!
  .replace(/^\/api\/procedures\/[^/]+$/, 'GET /api/procedures/<slug>')
  .replace(/^\/procedures\/[^/]+$/, 'SSR /procedures/<slug>')
  .replace(/^\/api\//, 'GET /api/')

async function cannon(opts: AcOptions, record = true): Promise<Run> {
  const ms: number[] = []
  const byLabel = new Map<string, { ms: number[], non2xx: number }>()
  let label = ''
  // autocannon calls a request's onResponse and then emits `response` synchronously for the
  // same response, so the label set by the first is the one the second belongs to.
  const requests = opts.requests?.map((r) => {
    const own = labelOf(r.path)
    return { ...r, onResponse: () => {
      label = own
    } }
  })
  let rotate = 0
  const instance = autocannon({
    timeout: 10,
    ...opts,
    requests,
    // Each connection starts at a different place in the request list, so the mix is mixed from the first second.
    setupClient: requests && requests.length > 1
      ? (client) => {
          const k = (rotate++ * 7) % requests.length
          client.setRequests([...requests.slice(k), ...requests.slice(0, k)])
        }
      : undefined,
  })
  running = instance
  if (record) {
    instance.on('response', (_client, status, _bytes, time) => {
      ms.push(time)
      if (!requests) return
      let entry = byLabel.get(label)
      if (!entry) byLabel.set(label, (entry = { ms: [], non2xx: 0 }))
      entry.ms.push(time)
      if (status < 200 || status > 299) entry.non2xx++
    })
  }
  const result = await instance
  running = undefined
  checkpoint()
  ms.sort((a, b) => a - b)
  for (const e of byLabel.values()) e.ms.sort((a, b) => a - b)
  return {
    seconds: result.duration,
    connections: opts.connections,
    reqPerSec: result.requests.total / result.duration,
    total: result.requests.total,
    non2xx: result.non2xx,
    errors: result.errors,
    timeouts: result.timeouts,
    codes: Object.entries(result.statusCodeStats).map(([code, { count }]) => `${code}×${count}`).join(' '),
    ms,
    byLabel,
    load1: os.loadavg()[0]!,
  }
}

async function expectOk(path: string, headers: Record<string, string>) {
  const res = await fetch(`${APP}${path}`, { headers, redirect: 'manual' })
  if (res.status !== 200) throw new Error(`GET ${path} answered ${res.status} before the run: ${(await res.text()).slice(0, 300)}`)
}

const loadBefore = os.loadavg()
try {
  const build = join(ROOT, '.output', 'nitro.json')
  let buildNote: string
  if (!existsSync(join(ROOT, '.output', 'server', 'index.mjs'))) {
    if (!args.build) throw new Error('no build in .output: run `npm run build` first, or pass --build')
    await buildApp()
    buildNote = 'built now'
  }
  else if (buildIsStale()) {
    if (args.build) {
      await buildApp()
      buildNote = 'rebuilt now (sources had changed)'
    }
    else {
      buildNote = `existing build of ${statSync(build).mtime.toISOString().slice(0, 16).replace('T', ' ')} — sources changed since (pass --build to rebuild first)`
      step(`app: sources are newer than .output; measuring the existing build (${buildNote})`)
    }
  }
  else buildNote = `build of ${statSync(build).mtime.toISOString().slice(0, 16).replace('T', ' ')}, up to date`

  // Leftovers of a bench run that was killed outright (their pid files are in .data-bench/,
  // which openBenchDatabase empties after stopping only its own database and object store).
  await Promise.all([stopApp(profile), stopPidFile(bareFiles.pid), stopMailCatcher(profile)])
  // Bench stack: fresh MariaDB + object store, migrated, with the demo workshop.
  bench = await openBenchDatabase()
  checkpoint()
  let t = Date.now()
  step('demo workshop: seeding into the bench database…')
  const seeded = await seedDemo(new ObjectStore(s3ConfigFromEnv()))
  done(`demo workshop seeded: ${Object.entries(seeded).map(([k, v]) => `${v} ${k}`).join(', ')}`, t)
  const live = await Procedure.findAll({ where: { status: 'active' }, order: [['id', 'ASC']] })
  const slugs = live.filter(p => p.publishedRevisionId).map(p => p.slug)
  if (!slugs.length) throw new Error('the demo seed left no live procedure')
  const [procedureCount, recordCount, userCount] = [await Procedure.count(), await RepairRecord.count(), await User.count()]
  const slug = slugs.includes('vr240-stuck-at-full') ? 'vr240-stuck-at-full' : slugs[0]!
  checkpoint()

  for (const port of [APP_PORT, BARE_PORT]) if (await portOpen(port)) throw new Error(`port ${port} is already in use`)
  // /api/health (which startApp waits for) checks the SMTP relay too: the bench stack's mail catcher.
  await startMailCatcher(profile)
  checkpoint()
  t = Date.now()
  step(`app: starting .output on ${APP} (log ${appFiles(profile).log})…`)
  await startApp(profile)
  done('app answering /api/health', t)
  checkpoint()

  const bareCode = `const b = JSON.stringify({ hello: 'world' }); require('node:http').createServer((q, s) => { s.writeHead(200, { 'content-type': 'application/json', 'content-length': Buffer.byteLength(b) }); s.end(b) }).listen(${BARE_PORT}, '127.0.0.1')`
  startDetached(process.execPath, ['-e', bareCode], { logFile: bareFiles.log, pidFile: bareFiles.pid, cwd: ROOT })
  await waitFor('bare node:http server', () => portOpen(BARE_PORT), 10_000)
  done(`bare node:http hello-world on 127.0.0.1:${BARE_PORT}`)

  // Sign in like the browser does (same-origin POST), keep the session cookie.
  const login = await fetch(`${APP}/api/auth/login`, {
    method: 'POST',
    headers: { 'content-type': 'application/json', 'origin': APP, 'sec-fetch-site': 'same-origin' },
    body: JSON.stringify({ email: DEMO_EMAIL, password: DEMO_PASSWORD }),
  })
  if (login.status !== 200) throw new Error(`sign-in answered ${login.status}: ${(await login.text()).slice(0, 300)}`)
  const cookie = login.headers.getSetCookie().map(c => c.split(';')[0]).join('; ')
  if (!cookie) throw new Error('sign-in set no cookie')
  const headers = { cookie, accept: 'application/json' }
  const pageHeaders = { cookie, accept: 'text/html' }
  // The index is built at start in chunks; /api/search answers 503 until it is ready.
  await waitFor('search index', async () => (await fetch(`${APP}/api/search?q=dim`, { headers })).status === 200, 60_000, 250)
  await expectOk(`/api/procedures/${slug}`, headers)
  await expectOk(`/procedures/${slug}`, pageHeaders)
  done(`signed in as ${DEMO_EMAIL}; search index ready; measuring ${slugs.length} live procedures (e.g. ${slug})`)
  checkpoint()

  // 1. JSON API vs bare node:http — same connections, same duration, one after the other.
  step(`1/3 bare node:http vs GET /api/procedures/${slug}: ${PAIR_CONNECTIONS} connections, ${PHASE_SECONDS} s each (after ${WARM_SECONDS} s warm-up)…`)
  await cannon({ url: `http://127.0.0.1:${BARE_PORT}/api/procedures/${slug}`, connections: PAIR_CONNECTIONS, duration: WARM_SECONDS, headers }, false)
  const bare = await cannon({ url: `http://127.0.0.1:${BARE_PORT}/api/procedures/${slug}`, connections: PAIR_CONNECTIONS, duration: PHASE_SECONDS, headers })
  await cannon({ url: `${APP}/api/procedures/${slug}`, connections: PAIR_CONNECTIONS, duration: WARM_SECONDS, headers }, false)
  const api = await cannon({ url: `${APP}/api/procedures/${slug}`, connections: PAIR_CONNECTIONS, duration: PHASE_SECONDS, headers })

  // 2. SSR page.
  step(`2/3 SSR /procedures/${slug}: ${SSR_CONNECTIONS} connections, ${PHASE_SECONDS} s (after ${WARM_SECONDS} s warm-up)…`)
  await cannon({ url: `${APP}/procedures/${slug}`, connections: SSR_CONNECTIONS, duration: WARM_SECONDS, headers: pageHeaders }, false)
  const ssr = await cannon({ url: `${APP}/procedures/${slug}`, connections: SSR_CONNECTIONS, duration: PHASE_SECONDS, headers: pageHeaders })

  // References, same run: what the session check alone and a data-free page cost. They show how
  // much of targets 1 and 2 is the app's own work and how much the stack's floor on this machine.
  const REF_SECONDS = Math.max(5, Math.round(PHASE_SECONDS / 2))
  step(`references: GET /api/me and SSR /login, ${REF_SECONDS} s each…`)
  await expectOk('/api/me', headers)
  await cannon({ url: `${APP}/api/me`, connections: PAIR_CONNECTIONS, duration: WARM_SECONDS, headers }, false)
  const me = await cannon({ url: `${APP}/api/me`, connections: PAIR_CONNECTIONS, duration: REF_SECONDS, headers })
  const publicPage = { accept: 'text/html' }
  await cannon({ url: `${APP}/login`, connections: SSR_CONNECTIONS, duration: WARM_SECONDS, headers: publicPage }, false)
  const loginPage = await cannon({ url: `${APP}/login`, connections: SSR_CONNECTIONS, duration: REF_SECONDS, headers: publicPage })

  // 3. Mixed read/search load: per block of 8, 3 searches, 2 procedure reads, 1 list, 1 evidence, 1 page.
  const phrases = [
    'wont dim', 'flickers half', 'dead no output', 'buzzs when dimmed', 'lamp glows wen off', 'trips the rcd',
    'charger hiccups', 'charges realy slow', 'runs hot', 'stays on all the time', 'switches on by itsel', 'no motion detct',
    'burning smel', '24v output low', 'flicker at low brightnes', 'stuck at full', 'dimmer dead after lamp blew', 'scorch marks',
  ]
  const q = (i: number) => `/api/search?q=${encodeURIComponent(phrases[i % phrases.length]!)}`
  const s = (i: number) => slugs[i % slugs.length]!
  const mix: AcRequest[] = []
  for (let i = 0; i < Math.max(slugs.length, phrases.length); i++) {
    mix.push(
      { path: q(3 * i), headers },
      { path: `/api/procedures/${s(i)}`, headers },
      { path: q(3 * i + 1), headers },
      { path: i % 2 ? '/api/procedures' : '/api/procedures?page=1&pageSize=20', headers },
      { path: `/api/evidence?procedure=${s(i + 3)}`, headers },
      { path: q(3 * i + 2), headers },
      { path: `/api/procedures/${s(i + 7)}`, headers },
      { path: `/procedures/${s(i + 5)}`, headers: pageHeaders },
    )
  }
  step(`3/3 mixed read/search load: ${LOAD_CONNECTIONS} connections, ${LOAD_SECONDS} s, ${mix.length} distinct requests (after ${WARM_SECONDS} s warm-up)…`)
  await cannon({ url: APP, connections: LOAD_CONNECTIONS, duration: WARM_SECONDS, requests: mix }, false)
  const load = await cannon({ url: APP, connections: LOAD_CONNECTIONS, duration: LOAD_SECONDS, requests: mix })

  // ── the table ──────────────────────────────────────────────────────────────────────────────
  const p = (r: { ms: number[] }, x: number) => percentile(r.ms, x)
  const f = (x: number) => (Number.isFinite(x) ? x.toFixed(1) : '–')
  const ok = (b: boolean) => (b ? '✓' : '✗')
  const head = `${'what'.padEnd(40)}${'conns'.padStart(6)}${'s'.padStart(5)}${'req/s'.padStart(9)}${'p50 ms'.padStart(9)}${'p95 ms'.padStart(9)}${'p99 ms'.padStart(9)}${'non-2xx'.padStart(9)}${'errors'.padStart(8)}${'load1'.padStart(7)}   target`
  const row = (label: string, r: Run | undefined, x: { reqPerSec: number, ms: number[], non2xx: number, errors?: number } = r!, target = '') =>
    console.log(`${label.padEnd(40)}${(r ? String(r.connections) : '').padStart(6)}${(r ? r.seconds.toFixed(0) : '').padStart(5)}${x.reqPerSec.toFixed(0).padStart(9)}${f(p(x, 50)).padStart(9)}${f(p(x, 95)).padStart(9)}${f(p(x, 99)).padStart(9)}${String(x.non2xx).padStart(9)}${(x.errors === undefined ? '' : String(x.errors)).padStart(8)}${(r ? r.load1.toFixed(2) : '').padStart(7)}   ${target}`)

  const ratio = api.reqPerSec / bare.reqPerSec
  const ssrP95 = p(ssr, 95)
  const loadP99 = p(load, 99)
  const loadErrors = load.non2xx + load.errors
  const loadAfter = os.loadavg()
  const la = (l: number[]) => l.map(x => x.toFixed(2)).join(' ')
  console.log(`\nBenchlore HTTP benchmark — .output (${buildNote}); bench stack (MariaDB :${profile.ports.db}, object store :${profile.ports.s3}); demo workshop: ${userCount} users, ${procedureCount} procedures (${slugs.length} live), ${recordCount} records; signed in as the demo technician`)
  console.log(`${os.cpus().length} CPUs (${os.cpus()[0]?.model ?? '?'}), load avg 1/5/15 min before ${la(loadBefore)}, after ${la(loadAfter)}; autocannon 9.0.0 in this process, app and bare server in their own; latencies from every response\n`)
  console.log(head)
  row('bare node:http hello-world', bare)
  row(`GET /api/procedures/${slug}`, api, api, `≥ 25 % of bare req/s: ${(ratio * 100).toFixed(1)} % ${ok(ratio >= 0.25 && api.non2xx + api.errors === 0)}`)
  row(`SSR /procedures/${slug}`, ssr, ssr, `p95 ≤ 80 ms at 10 conns: ${f(ssrP95)} ms ${ok(ssrP95 <= 80 && ssr.non2xx + ssr.errors === 0)}`)
  row('  ref: GET /api/me (session check only)', me, me, `${((me.reqPerSec / bare.reqPerSec) * 100).toFixed(1)} % of bare: one user-row query, no other work`)
  row('  ref: SSR /login (public, no data)', loginPage, loginPage, `the smallest page: Nuxt's own floor for target 2`)
  row('mixed read/search load', load, load, `0 errors, p99 ≤ 250 ms: ${loadErrors} errors, ${f(loadP99)} ms ${ok(loadErrors === 0 && loadP99 <= 250)}`)
  for (const [label, e] of [...load.byLabel.entries()].sort((a, b) => b[1].ms.length - a[1].ms.length)) {
    row(`  ${label}`, undefined, { reqPerSec: e.ms.length / load.seconds, ms: e.ms, non2xx: e.non2xx }, `${((e.ms.length / load.ms.length) * 100).toFixed(0)} % of responses`)
  }
  const runs: [string, Run][] = [['bare', bare], ['api', api], ['ssr', ssr], ['me', me], ['login', loginPage], ['load', load]]
  const codes = runs.map(([n, r]) => `${n} ${r.codes}${r.timeouts ? `, ${r.timeouts} timeouts` : ''}`).join(' · ')
  console.log(`\nstatus codes: ${codes}`)
  console.log(`targets 1 and 2 ran ${PHASE_SECONDS} s each, target 3 ${LOAD_SECONDS} s; each after a ${WARM_SECONDS} s warm-up that is not counted. p95/p99 are nearest-rank over every response time.`)

  await cleanup()
  // What the app wrote while under load (it logs to .data-bench/app.log).
  const log = appFiles(profile).log
  if (existsSync(log)) {
    const lines = readFileSync(log, 'utf8').split('\n').filter(Boolean)
    // (the AWS SDK's Node-version notice at start is not about the run)
    const bad = lines.filter(l => /error|warn|fail|unhandled|\b5\d\d\b/i.test(l) && !/NodeVersionSupportWarning|--trace-warnings/.test(l))
    console.log(`app log ${log.replace(`${ROOT}/`, '')}: ${lines.length} lines, ${bad.length} mention an error or warning${bad.length ? ':' : ''}`)
    for (const l of [...new Set(bad.map(x => x.slice(0, 200)))].slice(0, 8)) console.log(`  ${l}`)
  }
}
catch (error) {
  // A Ctrl-C that killed a synchronous child (mariadb-install-db) surfaces first as that step's
  // error; let the pending signal be handled before deciding which it was.
  await new Promise(resolve => setTimeout(resolve, 200))
  if (interrupted) process.exitCode = 130
  else {
    console.error(`✗ ${(error as Error).stack ?? error}`)
    process.exitCode = 1
  }
}
finally {
  await cleanup()
}
