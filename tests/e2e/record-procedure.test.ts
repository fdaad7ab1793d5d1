import { describe, expect, it } from 'vitest'
import { DEMO, DEMO_PASSWORD, signedIn } from '../helpers/api'
import { openBrowser, openHydrated, screenshot, signIn, waitForHydration } from '../helpers/browser'

// A record started from symptoms alone lists the live procedures that cover them: each opens in
// place (the record is saved as it goes, so nothing is lost by leaving it), and one can be taken
// as the record's procedure, whose steps the record then walks.

const WAIT = { timeout: 30_000 }

describe('choosing a procedure for a record started from symptoms, in Chromium', () => {
  it.each([{ width: 1280, height: 860 }, { width: 360, height: 760 }])('reads a candidate in place and takes it at $width px', async (size) => {
    const tech = await signedIn(DEMO.technician)
    const started = await tech.post('/api/records', { deviceType: 'rotary-led-dimmer-trailing-edge', symptoms: ['does-not-dim'], unit: { model: 'VR-240', serial: `SN-${size.width}`, jobRef: '' } })
    expect(started.status).toBe(201)
    const path = `/records/${started.body.record.id}`
    const browser = await openBrowser(size)
    const { page } = browser
    try {
      await signIn(page, DEMO.technician, DEMO_PASSWORD)
      await openHydrated(page, path)
      const first = page.locator('[data-testid^="candidate-procedure-"]').first()
      await first.waitFor(WAIT)
      const slug = (await first.getAttribute('data-testid'))!.replace('candidate-procedure-', '')
      await screenshot(page, `record-candidates-${size.width}`)

      const link = first.getByRole('link').first()
      expect(await link.getAttribute('target')).toBeNull()
      await link.click()
      await page.waitForURL(url => url.pathname === `/procedures/${slug}`, WAIT)
      expect(browser.context.pages()).toHaveLength(1)
      await page.goBack()
      await page.waitForURL(url => url.pathname === path, WAIT)
      await waitForHydration(page)

      await page.getByTestId(`candidate-choose-${slug}`).click()
      await page.getByTestId('record-progress').waitFor(WAIT)
      await expect.poll(() => page.getByTestId('candidate-procedures').count(), WAIT).toBe(0)
      const record = (await tech.get(`/api/records/${started.body.record.id}`)).body.record
      expect(record.procedure.slug).toBe(slug)
      expect(await page.getByTestId('record-title').textContent()).toContain(record.procedure.title)
      await screenshot(page, `record-procedure-taken-${size.width}`)
    }
    finally {
      await browser.close()
    }
  }, 120_000)
})
