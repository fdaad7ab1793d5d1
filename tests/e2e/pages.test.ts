import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { DEMO, DEMO_PASSWORD, signedIn } from '../helpers/api'
import { BASE_URL, openBrowser, openHydrated, screenshot, signIn, waitForHydration, watchPageProblems } from '../helpers/browser'

// Every page of the app, opened in Chromium under the page Content-Security-Policy (nonce-based,
// no inline script allowed): none may report a blocked script, style, font, image or connection,
// or a hydration mismatch, at a phone's width or a bench screen's. That covers hydration,
// Tailwind, the Literata font, the waveform canvas, uPlot and Chart.js (dashboard, captures).

async function pagePaths(): Promise<string[]> {
  const editor = await signedIn(DEMO.editor)
  const slug = 'vr240-stuck-at-full'
  const revisions = (await editor.get(`/api/procedures/${slug}/revisions`)).body.data as Array<{ id: number, state: string }>
  const live = revisions.find(r => r.state === 'published')!.id
  const older = revisions.find(r => r.state !== 'published')?.id ?? live
  const queue = (await editor.get('/api/revisions?scope=queue')).body.data as Array<{ id: number }>
  // The oldest closed record is one of the demo workshop's, the same whichever tests ran first.
  const record = (await editor.get('/api/records?pageSize=1&status=closed&sort=startedAt')).body.data[0].id as number
  const capture = (await editor.get('/api/captures/1')).status === 200 ? 1 : null
  // A draft of the admin's own, so its editor opens as its author would.
  const draft = (await (await signedIn(DEMO.admin)).post('/api/procedures', { content: { title: 'Page check draft' } })).body.revision.id as number
  return [
    '/', '/search?q=does%20not%20dim', '/search/waveform', '/procedures', `/procedures/${slug}`, `/procedures/${slug}/history`,
    `/procedures/${slug}/compare?a=${older}&b=${live}`, '/procedures/new', `/revisions/${live}`, '/records', '/records/new',
    `/records/${record}`, '/review', ...(queue[0] ? [`/review/${queue[0].id}`] : []), '/captures', ...(capture ? [`/captures/${capture}`] : []),
    '/dashboard', '/my-work', '/vocabulary', '/admin/users', '/admin/mail', `/revisions/${draft}/edit`,
  ]
}

describe('every page under the Content-Security-Policy', () => {
  let paths: string[] = []
  beforeAll(async () => {
    paths = await pagePaths()
  })

  it.each([{ width: 1280, height: 860 }, { width: 360, height: 760 }])('loads each page at $width px with no CSP violation and no hydration mismatch', async (size) => {
    const browser = await openBrowser(size)
    try {
      const { problems } = await watchPageProblems(browser.context, browser.page)
      await browser.page.goto(`${BASE_URL}/login`)
      await waitForHydration(browser.page)
      await browser.page.goto(`${BASE_URL}/invite/${'x'.repeat(43)}`)
      await waitForHydration(browser.page)
      await signIn(browser.page, DEMO.admin, DEMO_PASSWORD)
      for (const path of paths) {
        const res = await browser.page.goto(`${BASE_URL}${path}`)
        expect(res?.status(), path).toBeLessThan(400)
        expect(res?.headers()['content-security-policy'], path).toMatch(/script-src 'self' 'nonce-/)
        await waitForHydration(browser.page)
        // Charts and plots draw after hydration; give them their frame before reading the console.
        await browser.page.evaluate(() => new Promise(resolve => requestAnimationFrame(() => requestAnimationFrame(resolve))))
      }
      expect(problems).toEqual([])
    }
    finally {
      await browser.close()
    }
  }, 300_000)

  it('keeps the Literata font and Tailwind styles under the policy', async () => {
    const browser = await openBrowser()
    try {
      await signIn(browser.page, DEMO.technician, DEMO_PASSWORD)
      await openHydrated(browser.page, '/procedures/vr240-stuck-at-full')
      const { literata, accent } = await browser.page.evaluate(async () => {
        await document.fonts.ready
        const button = document.querySelector('.btn-primary, .btn-quiet')
        return { literata: document.fonts.check('16px Literata'), accent: button ? getComputedStyle(button).minHeight : '' }
      })
      expect(literata).toBe(true)
      expect(accent, 'Tailwind component classes apply').toBe('44px')
      await screenshot(browser.page, 'csp-procedure-reading')
    }
    finally {
      await browser.close()
    }
  })
})

afterAll(() => undefined)
