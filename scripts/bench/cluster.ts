// npm run bench:cluster [-- --duration N] [-- --connections C]: requests per second through the
// proxy of a throw-away cluster (scripts/lib/cluster.ts, kind "bench": data under
// .data-cluster/bench/) with one app instance behind nginx, then with two, in one run: same
// cluster, same signed-in technician, same read mix, same connections and duration. Prints both
// figures and their ratio. Everything it started is stopped at the end, on failure or Ctrl-C.
import { createRequire } from 'node:module'
import os from 'node:os'
import { parseArgs } from 'node:util'
import { clusterDown, clusterProfile, clusterUp, clusterWipe, proxyOf, proxyUrl, reconfigureProxy } from '../lib/cluster'
import { done, step } from '../lib/proc'
import { percentile } from '../lib/bench-stack'

// ── autocannon 9 ships no types: the part of its API used here ────────────────────────────────
interface AcRequest { method?: string, path: string, headers?: Record<string, string> }
interface AcClient { setRequests: (requests: AcRequest[]) => void }
interface AcResult { duration: number, errors: number, timeouts: number, non2xx: number, requests: { total: number } }
interface AcInstance extends PromiseLike<AcResult> {
  on: (event: 'response', listener: (client: AcClient, status: number, bytes: number, ms: number) => void) => void
  stop: () => void
}
interface AcOptions { url: string, connections: number, duration: number, headers?: Record<string, string>, requests?: AcRequest[], setupClient?: (client: AcClient) => void, timeout?: number }
const autocannon = createRequire(import.meta.url)('autocannon') as (opts: AcOptions) => AcInstance

const { values: args } = parseArgs({ options: { duration: { type: 'string', default: '20' }, connections: { type: 'string', default: '20' } } })
const SECONDS = Number(args.duration)
const CONNECTIONS = Number(args.connections)
if (!Number.isInteger(SECONDS) || SECONDS < 1 || SECONDS > 300) throw new Error(`--duration must be 1–300 seconds, got "${args.duration}"`)
if (!Number.isInteger(CONNECTIONS) || CONNECTIONS < 1 || CONNECTIONS > 500) throw new Error(`--connections must be 1–500, got "${args.connections}"`)
const WARM_SECONDS = 3

const profile = clusterProfile('bench')
const PROXY = proxyUrl(profile)
let running: AcInstance | undefined
let cleaning: Promise<void> | undefined
const cleanup = () => (cleaning ??= (async () => {
  running?.stop()
  await clusterDown(profile)
})())
for (const signal of ['SIGINT', 'SIGTERM'] as const) process.on(signal, () => void cleanup().then(() => process.exit(130)))

async function signIn(): Promise<string> {
  const res = await fetch(`${PROXY}/api/auth/login`, { method: 'POST', headers: { 'content-type': 'application/json' }, body: JSON.stringify({ email: 'tech@harbourlane.example', password: 'bench-demo-2026' }) })
  if (res.status !== 200) throw new Error(`sign-in through the proxy failed: ${res.status}`)
  const cookie = res.headers.getSetCookie().map(c => c.split(';')[0]!).find(c => c.startsWith('benchlore-session='))
  if (!cookie) throw new Error('no session cookie from sign-in')
  return cookie
}

/** What a technician's client reads most: the procedure list, one procedure, a search, who am I. */
async function readMix(cookie: string): Promise<AcRequest[]> {
  const list = await (await fetch(`${PROXY}/api/procedures?page=1`, { headers: { cookie } })).json() as { data: Array<{ slug: string }> }
  const slugs = list.data.slice(0, 6).map(p => p.slug)
  if (!slugs.length) throw new Error('the demo workshop has no published procedures')
  return [
    { path: '/api/procedures?page=1' },
    ...slugs.map(s => ({ path: `/api/procedures/${s}` })),
    { path: '/api/search?q=dimmer%20flicker' },
    { path: '/api/me' },
  ].map(r => ({ ...r, method: 'GET', headers: { cookie } }))
}

async function load(requests: AcRequest[], seconds: number, record: boolean) {
  const ms: number[] = []
  let rotate = 0
  const instance = autocannon({
    url: PROXY, connections: CONNECTIONS, duration: seconds, timeout: 10, requests,
    // Each connection starts at a different place in the list, so the mix is mixed from the first second.
    setupClient: (client) => {
      const k = rotate++ % requests.length
      client.setRequests([...requests.slice(k), ...requests.slice(0, k)])
    },
  })
  running = instance
  if (record) instance.on('response', (_c, _s, _b, time) => ms.push(time))
  const result = await instance
  running = undefined
  ms.sort((a, b) => a - b)
  return { rps: result.requests.total / result.duration, total: result.requests.total, non2xx: result.non2xx, errors: result.errors + result.timeouts, p50: percentile(ms, 50), p99: percentile(ms, 99) }
}

async function phase(instances: number[], requests: AcRequest[]) {
  await reconfigureProxy(proxyOf(profile, instances))
  await load(requests, WARM_SECONDS, false)
  return await load(requests, SECONDS, true)
}

let code = 0
try {
  await clusterWipe(profile)
  await clusterUp(profile, { fresh: true })
  const cookie = await signIn()
  const requests = await readMix(cookie)
  step(`measuring through ${PROXY}: ${CONNECTIONS} connections, ${SECONDS} s per phase (after ${WARM_SECONDS} s warm-up), ${requests.length} GET routes in rotation`)
  const one = await phase([0], requests)
  const two = await phase(profile.appPorts.map((_, i) => i), requests)
  const row = (label: string, r: typeof one) =>
    `${label.padEnd(22)} ${r.rps.toFixed(0).padStart(8)} ${String(r.total).padStart(8)} ${r.p50.toFixed(0).padStart(7)} ${r.p99.toFixed(0).padStart(7)} ${String(r.non2xx).padStart(7)} ${String(r.errors).padStart(7)}`
  console.log(`
${'through nginx'.padEnd(22)} ${'req/s'.padStart(8)} ${'requests'.padStart(8)} ${'p50 ms'.padStart(7)} ${'p99 ms'.padStart(7)} ${'non-2xx'.padStart(7)} ${'errors'.padStart(7)}
${row('one app instance', one)}
${row(`${profile.appPorts.length} app instances`, two)}

ratio ${profile.appPorts.length} instances / one: ${(two.rps / one.rps).toFixed(2)}
(${os.cpus().length} CPU cores shared by nginx, the instances, ${profile.db.nodes.length} database nodes and the load generator; load average ${os.loadavg()[0]!.toFixed(1)})`)
  if (one.non2xx || two.non2xx || one.errors || two.errors) {
    console.error('✗ some requests failed; the figures above are not a clean measurement')
    code = 1
  }
}
catch (error) {
  console.error(`✗ ${(error as Error).message}`)
  code = 1
}
finally {
  await cleanup()
  done('bench cluster stopped')
}
process.exit(code)
