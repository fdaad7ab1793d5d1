import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { XSS_VECTORS } from '../helpers/xss'
import { DEMO, DEMO_PASSWORD, signedIn } from '../helpers/api'
import { makeContent } from '../helpers/content'
import { BASE_URL, openBrowser, screenshot, signIn } from '../helpers/browser'

// OWASP XSS filter-evasion vectors in every Markdown and text field of a published procedure:
// opened in Chromium, no dialog may fire and no script or handler may reach the page.
describe('XSS vectors in a published procedure, rendered in Chromium', () => {
  let slug = ''
  let revisionId = 0
  beforeAll(async () => {
    const all = XSS_VECTORS.join('\n\n')
    const author = await signedIn(DEMO.author)
    const editor = await signedIn(DEMO.editor)
    const created = await author.post('/api/procedures', {
      content: makeContent({
        title: `XSS check <img src=x onerror=alert(1)> "><script>alert(2)</script>`,
        summary: all,
        fix: all,
        verification: all,
        appliesTo: ['<svg/onload=alert(3)>'],
        causes: [{ key: 'c1', name: '<img src=x onerror=alert(4)>', detail: all, prior: 0.5 }],
        steps: [{ key: 's1', title: '<script>alert(5)</script>', instruction: all, failPointsTo: ['c1'], measurement: { quantity: 'dc_voltage', unit: 'V', min: 1, max: 2 } }],
        parts: [{ name: '<img src=x onerror=alert(6)>', partNumber: '"><script>alert(7)</script>', substitutes: ['javascript:alert(8)'] }],
      }),
    })
    slug = created.body.procedure.slug
    revisionId = created.body.revision.id
    await author.post(`/api/revisions/${revisionId}/submit`)
    await editor.post(`/api/revisions/${revisionId}/approve`)
  })

  let browser: Awaited<ReturnType<typeof openBrowser>>
  beforeAll(async () => {
    browser = await openBrowser()
  })
  afterAll(async () => {
    await browser?.close()
  })

  it.each([
    ['the reader', () => `/procedures/${slug}`, DEMO.technician],
    ['the revision page', () => `/revisions/${revisionId}`, DEMO.author],
    ['the history', () => `/procedures/${slug}/history`, DEMO.author],
  ])('%s fires no dialog and carries no injected script', async (_, path, who) => {
    const { page, context } = browser
    await context.clearCookies()
    const dialogs: string[] = []
    page.on('dialog', (d) => {
      dialogs.push(d.message())
      void d.dismiss()
    })
    await signIn(page, who, DEMO_PASSWORD)
    await page.goto(`${BASE_URL}${path()}`, { waitUntil: 'networkidle' })
    await page.waitForTimeout(500)
    expect(dialogs).toEqual([])
    const injected = await page.evaluate(() => {
      const main = document.querySelector('main')!
      const scripts = main.querySelectorAll('script').length
      const handlers = [...main.querySelectorAll('*')].flatMap(el => [...el.attributes].filter(a => /^on/i.test(a.name)).map(a => `${el.tagName}.${a.name}`))
      const jsLinks = [...main.querySelectorAll('[href],[src]')].filter(el => /^\s*(javascript|vbscript|data):/i.test(el.getAttribute('href') ?? el.getAttribute('src') ?? '')).length
      return { scripts, handlers, jsLinks, svg: main.querySelectorAll('svg[onload], iframe, object, embed').length }
    })
    expect(injected).toEqual({ scripts: 0, handlers: [], jsLinks: 0, svg: 0 })
    await screenshot(page, `xss-${path().split('/').slice(1, 2).join('-')}-${who.split('@')[0]}`)
  })
})
