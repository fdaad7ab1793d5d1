import type { Page } from 'playwright-core'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { DEMO, DEMO_PASSWORD, signedIn, type ApiClient } from '../helpers/api'
import { openBrowser, openHydrated, screenshot, signIn } from '../helpers/browser'

type Browser = Awaited<ReturnType<typeof openBrowser>>
const WAIT = { timeout: 30_000 }
const stamp = Date.now().toString(36)

// The demo procedure "VR-240 stuck at full brightness" of the Harbour Lane Repair Co-op, worked
// on a phone: finished steps fold to one line, and the close form is one tap away from anywhere.
const STUCK = 'vr240-stuck-at-full'

async function startRecord(client: ApiClient, tag: string): Promise<number> {
  const res = await client.post('/api/records', { procedureSlug: STUCK, unit: { model: 'VR-240 rev C', serial: `PF-${tag}-${stamp}`, jobRef: `PF-${stamp}` } })
  expect(res.status).toBe(201)
  return res.body.record.id
}

/** How far the element's top is from the top of the window, in CSS pixels. */
const topOf = (page: Page, testId: string) => page.getByTestId(testId).evaluate(el => el.getBoundingClientRect().top)
const pageWidth = (page: Page) => page.evaluate(() => document.documentElement.scrollWidth)

describe('the guided record on a phone, in Chromium', () => {
  let technician: ApiClient

  beforeAll(async () => {
    technician = await signedIn(DEMO.technician)
  }, 60_000)

  describe('at 360 px', () => {
    let browser: Browser
    beforeAll(async () => {
      browser = await openBrowser({ width: 360, height: 740 })
      await signIn(browser.page, DEMO.technician, DEMO_PASSWORD)
    }, 120_000)
    afterAll(async () => {
      await browser?.close()
    })

    it('folds a finished step to one line with its verdict, and opens it again with a tap', async () => {
      const { page } = browser
      const id = await startRecord(technician, 'fold')
      await openHydrated(page, `/records/${id}`)

      // The lamp reads the full bench voltage at minimum: the symptom is there, and the step is
      // done by its reading. Written the way a meter's AC range is often noted (common practice).
      await page.getByTestId('reading-input-confirm').pressSequentially('230 VAC')
      await expect.poll(() => page.getByTestId('verdict-confirm').getAttribute('data-state'), WAIT).toBe('high')
      // The step being read stays open while the technician is on it.
      expect(await page.getByTestId('reading-input-confirm').isVisible()).toBe(true)

      // Moving on to the next reading (a healthy body diode reads 0.4–0.7 V, common practice)
      // folds the finished step to one line: number, title, reading and verdict.
      await page.getByTestId('reading-input-q1_ds').pressSequentially('0.58')
      await expect.poll(() => page.getByTestId('verdict-q1_ds').getAttribute('data-state'), WAIT).toBe('in_range')
      const line = page.getByTestId('step-line-confirm')
      await expect.poll(() => line.getAttribute('aria-expanded'), WAIT).toBe('false')
      expect(await page.getByTestId('reading-input-confirm').isVisible()).toBe(false)
      const text = (await line.textContent()) ?? ''
      expect(text).toMatch(/Step 1\b/)
      expect(text).toMatch(/230\s*V/)
      expect(text).toContain('High')
      expect(await line.locator('[data-verdict="high"]').count()).toBe(1)
      // One line: no taller than a roomy touch row.
      expect((await line.boundingBox())!.height).toBeLessThan(72)
      // The step being read now stays open.
      expect(await page.getByTestId('reading-input-q1_ds').isVisible()).toBe(true)
      await screenshot(page, 'record-phone-flow-folded-360')

      // A tap opens it again, and it can be folded back.
      await line.click()
      await expect.poll(() => page.getByTestId('reading-input-confirm').isVisible(), WAIT).toBe(true)
      expect(await page.getByTestId('step-line-confirm').getAttribute('aria-expanded')).toBe('true')
      expect(await page.getByTestId('reading-input-confirm').inputValue()).toBe('230 VAC')
      await page.getByTestId('step-line-confirm').click()
      await expect.poll(() => page.getByTestId('reading-input-confirm').isVisible(), WAIT).toBe(false)
      expect(await page.getByTestId('step-line-confirm').getAttribute('aria-expanded')).toBe('false')
      expect(await pageWidth(page)).toBeLessThanOrEqual(360)
    }, 180_000)

    it('reaches the close form from the sticky bar anywhere on the page, without widening it', async () => {
      const { page } = browser
      const id = await startRecord(technician, 'close')
      await openHydrated(page, `/records/${id}`)
      const viewport = page.viewportSize()!

      // From the top of the page the close form is far below the fold.
      expect(await topOf(page, 'close-form')).toBeGreaterThan(viewport.height)
      await page.getByTestId('record-close-out').click()
      await expect.poll(async () => {
        const top = await topOf(page, 'close-form')
        return top >= 0 && top < viewport.height / 2
      }, WAIT).toBe(true)
      // Focus goes with it, so the keyboard and a screen reader carry on in the form.
      expect(await page.evaluate(() => document.activeElement?.closest('#close-out') !== null)).toBe(true)
      // The bar stays on screen and does not hide the form's heading.
      const bar = (await page.getByTestId('record-bar').boundingBox())!
      expect(bar.y).toBeGreaterThanOrEqual(-1)
      expect(await topOf(page, 'close-form')).toBeGreaterThanOrEqual(bar.y + bar.height - 1)
      expect(await pageWidth(page)).toBeLessThanOrEqual(360)
      await screenshot(page, 'record-phone-flow-close-360')

      // From halfway down, among the steps, the same button still works.
      await page.getByTestId('reading-input-bridge').scrollIntoViewIfNeeded()
      expect(await page.getByTestId('record-close-out').isVisible()).toBe(true)
      await page.getByTestId('record-close-out').click()
      await expect.poll(async () => {
        const top = await topOf(page, 'close-form')
        return top >= 0 && top < viewport.height / 2
      }, WAIT).toBe(true)
    }, 180_000)
  })

  it('keeps the bar on one row and the page within the window at 1280 px', async () => {
    const wide = await openBrowser({ width: 1280, height: 860 })
    try {
      await signIn(wide.page, DEMO.technician, DEMO_PASSWORD)
      const id = await startRecord(technician, 'wide')
      await openHydrated(wide.page, `/records/${id}`)
      await wide.page.getByTestId('reading-input-confirm').pressSequentially('230 VAC')
      await wide.page.getByTestId('reading-input-q1_ds').pressSequentially('0.58')
      await expect.poll(() => wide.page.getByTestId('step-line-confirm').getAttribute('aria-expanded'), WAIT).toBe('false')
      expect(await wide.page.getByTestId('record-close-out').isVisible()).toBe(true)
      expect((await wide.page.getByTestId('record-bar').boundingBox())!.height).toBeLessThan(64)
      expect(await pageWidth(wide.page)).toBeLessThanOrEqual(1280)
      await screenshot(wide.page, 'record-phone-flow-1280')
    }
    finally {
      await wide.close()
    }
  }, 180_000)
})
