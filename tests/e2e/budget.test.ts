import { readFileSync } from 'node:fs'
import { join } from 'node:path'
import { gzipSync } from 'node:zlib'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { DEMO, DEMO_PASSWORD } from '../helpers/api'
import { BASE_URL, openBrowser, signIn, waitForHydration } from '../helpers/browser'

type Browser = Awaited<ReturnType<typeof openBrowser>>

// Client JavaScript budget of the procedure reader, the page a phone at the bench opens most:
// ≤ 200 KB gzip (a common web performance budget). Counted as what Chromium fetches for the
// page, each file gzipped at the default level from the build output.
const BUDGET_KB = 200

describe('client JavaScript of the reader page', () => {
  let browser: Browser
  beforeAll(async () => {
    browser = await openBrowser()
    await signIn(browser.page, DEMO.technician, DEMO_PASSWORD)
  }, 60_000)
  afterAll(async () => {
    await browser?.close()
  })

  it(`stays within ${BUDGET_KB} KB gzip`, async () => {
    const { context } = browser
    // A fresh page, so nothing comes from the cache of the sign-in.
    const page = await context.newPage()
    const scripts = new Set<string>()
    // Prefetches of other pages' code (links in view, fetched at idle) are not the page's own.
    page.on('request', (req) => {
      const url = new URL(req.url())
      const headers = req.headers()
      const prefetch = /prefetch/i.test(headers['sec-purpose'] ?? headers.purpose ?? '')
      if (!prefetch && url.pathname.startsWith('/_nuxt/') && url.pathname.endsWith('.js')) scripts.add(url.pathname)
    })
    await page.goto(`${BASE_URL}/procedures/vr240-stuck-at-full`)
    await waitForHydration(page)
    await page.waitForLoadState('networkidle')
    const files = [...scripts].map((p) => {
      const data = readFileSync(join(process.cwd(), '.output', 'public', p))
      return { path: p, raw: data.length, gzip: gzipSync(data).length }
    }).sort((a, b) => b.gzip - a.gzip)
    const total = files.reduce((s, f) => s + f.gzip, 0)
    console.log(`reader page: ${files.length} scripts, ${(files.reduce((s, f) => s + f.raw, 0) / 1024).toFixed(0)} KB raw, ${(total / 1024).toFixed(1)} KB gzip; largest: ${files.slice(0, 3).map(f => `${f.path} ${(f.gzip / 1024).toFixed(1)} KB`).join(', ')}`)
    expect(files.length).toBeGreaterThan(0)
    expect(total / 1024).toBeLessThanOrEqual(BUDGET_KB)
    await page.close()
  })
})
