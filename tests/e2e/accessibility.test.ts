import { createRequire } from 'node:module'
import type { Page } from 'playwright-core'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { DEMO, DEMO_PASSWORD, signedIn } from '../helpers/api'
import { makeContent } from '../helpers/content'
import { openBrowser, openHydrated, screenshot, signIn } from '../helpers/browser'

// axe-core (Deque's rules engine, WCAG 2.x A/AA and its best-practice rules) over the pages a
// technician and an editor work in. It is loaded as an init script, which the page's
// Content-Security-Policy does not apply to, and run after hydration.

const AXE = createRequire(import.meta.url).resolve('axe-core/axe.min.js')
type Browser = Awaited<ReturnType<typeof openBrowser>>
interface Violation { id: string, nodes: Array<{ target: string[] }> }

async function violations(page: Page): Promise<string[]> {
  const found = await page.evaluate(async () => {
    const axe = (window as unknown as { axe: { run: (ctx: Document, opts: object) => Promise<{ violations: Violation[] }> } }).axe
    return (await axe.run(document, { resultTypes: ['violations'] })).violations
  })
  return found.map(v => `${v.id}: ${v.nodes.map(n => n.target.join(' ')).join(', ')}`)
}

describe('accessibility of the working pages (axe-core)', () => {
  let browser: Browser
  const paths: Record<string, string> = {}

  beforeAll(async () => {
    const tech = await signedIn(DEMO.technician)
    const slug = 'vr240-stuck-at-full'
    paths.procedure = `/procedures/${slug}`
    const guided = await tech.post('/api/records', { procedureSlug: slug, symptoms: [], unit: { model: 'VR-240', serial: 'A11Y-1', jobRef: '' } })
    expect(guided.status).toBe(201)
    paths['record in progress'] = `/records/${guided.body.record.id}`
    const fromSymptoms = await tech.post('/api/records', { deviceType: 'rotary-led-dimmer-trailing-edge', symptoms: ['does-not-dim'], unit: { model: 'VR-240', serial: 'A11Y-2', jobRef: '' } })
    expect(fromSymptoms.status).toBe(201)
    paths['record from symptoms'] = `/records/${fromSymptoms.body.record.id}`
    const closed = (await tech.get('/api/records?pageSize=1&status=closed')).body.data[0].id as number
    paths['closed record'] = `/records/${closed}`
    const author = await signedIn(DEMO.author)
    const draft = await author.post('/api/procedures', { content: makeContent({ title: `Dimmer hums at low setting ${Date.now().toString(36)}` }) })
    expect(draft.status).toBe(201)
    expect((await author.post(`/api/revisions/${draft.body.revision.id}/submit`)).status).toBe(200)
    paths.review = `/review/${draft.body.revision.id}`

    browser = await openBrowser()
    await browser.context.addInitScript({ path: AXE })
    await signIn(browser.page, DEMO.editor, DEMO_PASSWORD)
  }, 120_000)

  afterAll(async () => {
    await browser?.close()
  })

  it.each(['procedure', 'record in progress', 'record from symptoms', 'closed record', 'review'])('finds no violation on the %s page', async (name) => {
    const path = paths[name]!
    await openHydrated(browser.page, path)
    const found = await violations(browser.page)
    await screenshot(browser.page, `a11y-${name.replace(/\s+/g, '-')}`)
    expect(found, path).toEqual([])
  }, 90_000)
})
