// npm run bench:phone [-- --build] [-- --runs N] — the procedure reader on a throttled mid-range
// phone: the built app (.output) on the bench stack (fresh MariaDB, object store and mail catcher
// under .data-bench/, demo workshop seeded), opened in Debian's headless Chromium, signed in as the
// demo technician, at 360 × 740 px with Chromium's CPU slowed 4× and the network at 1.6 Mbps
// down, 750 kbps up, 150 ms latency. Printed for the first visit (empty browser cache, no service
// worker) and the repeat visit (same browser, the service worker in charge), each the median of
// N runs (default 3):
//   - time to interactive: from the start of the navigation until the app has hydrated (taps
//     and typing work from then on); targets ≤ 3 s first, ≤ 1 s repeat
//   - bytes the page fetched over the network (what the phone pays for) and the page's JavaScript
//     on the wire; target ≤ 200 KB of JavaScript on the first visit. Answers the service worker
//     gives are counted apart, by number: on the repeat visit the page itself reaches the server
//     through the worker (network first), so its bytes are not in the page's figure.
import { existsSync, mkdtempSync, rmSync } from 'node:fs'
import { tmpdir } from 'node:os'
import { join } from 'node:path'
import { parseArgs } from 'node:util'
import { chromium, type BrowserContext, type CDPSession, type Page } from 'playwright-core'
import { seedDemo } from '../seed/demo'
import { ObjectStore, s3ConfigFromEnv } from '../../server/services/storage'
import { openBenchDatabase } from '../lib/bench-stack'
import { done, portOpen, step } from '../lib/proc'
import { ROOT, benchProfile, buildApp, buildIsStale, startApp, startMailCatcher, stopApp, stopDatabase, stopMailCatcher, stopObjectStore } from '../lib/stack'

const { values: args } = parseArgs({ options: { build: { type: 'boolean', default: false }, runs: { type: 'string', default: '3' } } })
const RUNS = Number(args.runs)
if (!Number.isInteger(RUNS) || RUNS < 1) throw new Error(`--runs must be a whole number, got "${args.runs}"`)
const SLUG = 'vr240-stuck-at-full'
const DEMO_EMAIL = 'tech@harbourlane.example'
const DEMO_PASSWORD = 'bench-demo-2026'
/** A mid-range phone on a weak mobile link (the profile named in the target). */
const PHONE = { cpuSlowdown: 4, downBytesPerS: 1_600_000 / 8, upBytesPerS: 750_000 / 8, latencyMs: 150, width: 360, height: 740 }

const profile = benchProfile()
const APP = `http://127.0.0.1:${profile.ports.app}`
let bench: Awaited<ReturnType<typeof openBenchDatabase>> | undefined

interface Visit { ms: number, bytes: number, jsBytes: number, fromWorker: number }

/** Throttles this page as the phone profile says, and counts what crosses the network. */
async function throttle(page: Page): Promise<{ cdp: CDPSession, counted: () => Omit<Visit, 'ms'> }> {
  const cdp = await page.context().newCDPSession(page)
  await cdp.send('Network.enable')
  await cdp.send('Network.emulateNetworkConditions', { offline: false, latency: PHONE.latencyMs, downloadThroughput: PHONE.downBytesPerS, uploadThroughput: PHONE.upBytesPerS })
  await cdp.send('Emulation.setCPUThrottlingRate', { rate: PHONE.cpuSlowdown })
  const types = new Map<string, { js: boolean, worker: boolean }>()
  let bytes = 0
  let jsBytes = 0
  let fromWorker = 0
  cdp.on('Network.responseReceived', (e) => {
    types.set(e.requestId, { js: e.type === 'Script', worker: Boolean(e.response.fromServiceWorker) })
  })
  cdp.on('Network.loadingFinished', (e) => {
    const t = types.get(e.requestId)
    if (t?.worker) {
      fromWorker++
      return
    }
    bytes += e.encodedDataLength
    if (t?.js) jsBytes += e.encodedDataLength
  })
  return { cdp, counted: () => ({ bytes, jsBytes, fromWorker }) }
}

async function visit(context: BrowserContext): Promise<Visit> {
  const page = await context.newPage()
  const { cdp, counted } = await throttle(page)
  const started = Date.now()
  await page.goto(`${APP}/procedures/${SLUG}`, { waitUntil: 'commit' })
  await page.waitForFunction(() => {
    const app = (document.querySelector('#__nuxt') as { __vue_app__?: { $nuxt?: { isHydrating?: boolean } } } | null)?.__vue_app__
    return app?.$nuxt?.isHydrating === false
  }, undefined, { timeout: 120_000, polling: 50 })
  const ms = Date.now() - started
  await page.getByTestId('procedure-title').waitFor({ timeout: 30_000 })
  await page.waitForLoadState('networkidle')
  const result = { ms, ...counted() }
  await cdp.detach()
  await page.close()
  return result
}

const median = (xs: number[]) => [...xs].sort((a, b) => a - b)[Math.floor(xs.length / 2)]!
const kb = (n: number) => `${(n / 1024).toFixed(1)} KB`

async function measure(): Promise<{ first: Visit[], repeat: Visit[] }> {
  const first: Visit[] = []
  const repeat: Visit[] = []
  for (let run = 0; run < RUNS; run++) {
    const dir = mkdtempSync(join(tmpdir(), 'benchlore-phone-'))
    const context = await chromium.launchPersistentContext(dir, {
      executablePath: process.env.CHROMIUM_PATH ?? '/usr/bin/chromium',
      headless: true,
      viewport: { width: PHONE.width, height: PHONE.height },
      args: ['--no-sandbox', '--disable-gpu', '--disable-quic', '--no-first-run', '--disable-background-networking', '--disable-component-update', '--disable-sync', '--disable-dev-shm-usage'],
    })
    try {
      // Signing in is not measured; it leaves no script or style in the cache (the session cookie only).
      const res = await context.request.post(`${APP}/api/auth/login`, { data: { email: DEMO_EMAIL, password: DEMO_PASSWORD }, headers: { origin: APP } })
      if (res.status() !== 200) throw new Error(`sign-in answered ${res.status()}`)
      first.push(await visit(context))
      // The service worker installs after the first visit; the repeat visit starts once it runs.
      const page = await context.newPage()
      await page.goto(`${APP}/`)
      await page.evaluate(() => navigator.serviceWorker.ready)
      await page.waitForFunction(() => Boolean(navigator.serviceWorker.controller), undefined, { timeout: 60_000 })
      await page.close()
      repeat.push(await visit(context))
    }
    finally {
      await context.close()
      rmSync(dir, { recursive: true, force: true })
    }
  }
  return { first, repeat }
}

function report(label: string, visits: Visit[], targetMs: number) {
  const ms = median(visits.map(v => v.ms))
  console.log(`${label.padEnd(13)} time to interactive ${(ms / 1000).toFixed(2)} s (target ≤ ${targetMs / 1000} s: ${ms <= targetMs ? 'met' : 'NOT met'}); runs ${visits.map(v => (v.ms / 1000).toFixed(2)).join(', ')} s`)
  console.log(`${''.padEnd(13)} fetched by the page over the network ${kb(median(visits.map(v => v.bytes)))}, of it JavaScript ${kb(median(visits.map(v => v.jsBytes)))}; answered by the service worker: ${median(visits.map(v => v.fromWorker))} requests`)
}

try {
  if (!existsSync(join(ROOT, '.output', 'server', 'index.mjs')) || (args.build && buildIsStale())) await buildApp()
  else if (buildIsStale()) step('app: sources are newer than .output; measuring the existing build (pass --build to rebuild first)')
  await stopApp(profile)
  await stopMailCatcher(profile)
  bench = await openBenchDatabase()
  let t = Date.now()
  step('demo workshop: seeding into the bench database…')
  await seedDemo(new ObjectStore(s3ConfigFromEnv()))
  done('demo workshop seeded', t)
  if (await portOpen(profile.ports.app)) throw new Error(`port ${profile.ports.app} is already in use`)
  await startMailCatcher(profile)
  t = Date.now()
  await startApp(profile)
  done(`app answering on ${APP}`, t)

  step(`${RUNS} × (first visit, repeat visit) of /procedures/${SLUG} at ${PHONE.width} px, CPU ${PHONE.cpuSlowdown}× slower, ${PHONE.downBytesPerS * 8 / 1e6} Mbps down, ${PHONE.latencyMs} ms latency…`)
  const { first, repeat } = await measure()
  console.log('')
  report('first visit', first, 3000)
  report('repeat visit', repeat, 1000)
  const js = median(first.map(v => v.jsBytes))
  console.log(`JavaScript on the wire, first visit: ${kb(js)} (target ≤ 200 KB: ${js <= 200 * 1024 ? 'met' : 'NOT met'})`)
}
finally {
  await stopApp(profile)
  await stopMailCatcher(profile)
  if (bench) await bench.stop()
  else {
    await stopObjectStore(profile)
    await stopDatabase(profile)
  }
}
