import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { DEMO, DEMO_PASSWORD, signedIn, type ApiClient } from '../helpers/api'
import { openBrowser, openHydrated, screenshot, signIn } from '../helpers/browser'

type Browser = Awaited<ReturnType<typeof openBrowser>>
const WAIT = { timeout: 30_000 }
// The demo's VR-240 half-cycle decision flow (Harbour Lane Repair Co-op), which is live.
const SLUG = 'vr240-half-cycle-flow'

async function saveDraft(author: ApiClient, id: number, change: (content: any) => void, changeNote: string) {
  const rev = (await author.get(`/api/revisions/${id}`)).body
  const content = structuredClone(rev.content)
  change(content)
  expect((await author.put(`/api/revisions/${id}`, { version: rev.version, content, changeNote })).status).toBe(200)
  expect((await author.post(`/api/revisions/${id}/submit`)).status).toBe(200)
}

describe('reviewing a resubmission of a live procedure, in Chromium', () => {
  let browser: Browser
  let resubmitted = 0

  beforeAll(async () => {
    const author = await signedIn(DEMO.author)
    const editor = await signedIn(DEMO.editor)
    const first = (await author.post(`/api/procedures/${SLUG}/revisions`, {})).body.revision.id
    await saveDraft(author, first, (c) => {
      c.steps[2].verdicts.low = { conclude: 'switch_shorted' }
    }, 'Low bridge reading sent to Q1.')
    expect((await editor.post(`/api/revisions/${first}/comments`, { body: 'A low bridge reading confirms the bridge, not Q1.', stepKey: 'bridge' })).status).toBe(201)
    expect((await editor.post(`/api/revisions/${first}/request-changes`, { comment: 'The low branch points at the wrong part.' })).status).toBe(200)
    const again = await author.post(`/api/procedures/${SLUG}/revisions`, { from: first })
    expect(again.status).toBe(201)
    resubmitted = again.body.revision.id
    await saveDraft(author, resubmitted, (c) => {
      c.steps[2].verdicts.low = { conclude: 'bridge_shorted' }
      c.steps[2].instruction = `${c.steps[2].instruction}\n\nHold the probes still for two seconds.`
    }, 'Low bridge reading confirms the bridge.')
    browser = await openBrowser()
    await signIn(browser.page, DEMO.editor, DEMO_PASSWORD)
  }, 120_000)

  afterAll(async () => {
    await browser?.close()
  })

  it('compares with the revision sent back and its comments first, and with the live one on a tap', async () => {
    const { page } = browser
    await openHydrated(page, `/review/${resubmitted}`)
    await page.getByTestId('review-sent-back').waitFor(WAIT)
    expect(await page.getByTestId('review-sent-back').textContent()).toContain('A low bridge reading confirms the bridge, not Q1.')
    expect(await page.getByTestId('review-compared-with').textContent()).toMatch(/which was sent back/)
    // The branch the comment asked about, in words and by name.
    const step = page.getByTestId('item-change-steps-bridge')
    expect(await step.textContent()).toMatch(/BR1 diode shorted/)
    expect(await step.textContent()).toMatch(/MOSFET Q1 shorted/)
    await screenshot(page, 'review-resubmission-sent-back')

    await page.getByTestId('review-compare-switch').click()
    await expect.poll(() => page.getByTestId('review-compared-with').textContent(), WAIT).toMatch(/technicians follow today/)
    // Against the live revision the branch is as it was; only the instruction changed.
    await expect.poll(() => step.textContent(), WAIT).not.toMatch(/MOSFET Q1 shorted/)
    expect(await step.locator('ins').allTextContents()).toContainEqual(expect.stringMatching(/two seconds/))
    await page.getByTestId('review-compare-switch').click()
    await expect.poll(() => page.getByTestId('review-compared-with').textContent(), WAIT).toMatch(/which was sent back/)
  }, 120_000)
})
