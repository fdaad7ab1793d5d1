import { describe, expect, it } from 'vitest'
import { DEMO, DEMO_PASSWORD } from '../helpers/api'
import { openBrowser, openHydrated, screenshot, signIn } from '../helpers/browser'

// The dashboard's count of repaired units carries Benchlore's own label (contributor guide,
// "Labels of our own"), on the figure and on its panel, at a phone's width and a bench screen's.

describe('dashboard labels', () => {
  it.each([{ width: 1280, height: 860 }, { width: 360, height: 760 }])('names repaired units "Returned to service" at $width px', async (size) => {
    const browser = await openBrowser(size)
    const { page } = browser
    try {
      await signIn(page, DEMO.technician, DEMO_PASSWORD)
      await openHydrated(page, '/dashboard')
      const figure = page.getByTestId('dash-figure-waste').locator('xpath=..')
      await figure.waitFor()
      expect(await figure.locator('dt').textContent()).toBe('Returned to service')
      expect(await page.getByTestId('dash-waste').locator('h2').textContent()).toBe('Returned to service')
      expect(await page.locator('main').textContent()).not.toMatch(/waste stream/i)
      await screenshot(page, `dashboard-${size.width}`)
    }
    finally {
      await browser.close()
    }
  }, 120_000)
})
