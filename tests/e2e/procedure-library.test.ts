import { describe, expect, it } from 'vitest'
import { DEMO, DEMO_PASSWORD } from '../helpers/api'
import { BASE_URL, openBrowser, openHydrated, screenshot, signIn, waitForHydration } from '../helpers/browser'

// The library's order and grouping are chosen in the page and kept in the address, so a reload,
// a shared link or a filter change keeps them.

const WAIT = { timeout: 30_000 }

describe('procedures library order and grouping, in Chromium', () => {
  it.each([{ width: 1280, height: 860 }, { width: 360, height: 760 }])('sorts by title and groups by device type at $width px', async (size) => {
    const browser = await openBrowser(size)
    const { page } = browser
    try {
      await signIn(page, DEMO.technician, DEMO_PASSWORD)
      await openHydrated(page, '/procedures')
      await expect.poll(() => page.locator('[data-testid^="library-section-"]').count()).toBe(0)

      await page.getByTestId('library-sort-title').click()
      await page.waitForURL(url => url.searchParams.get('sort') === 'title', WAIT)
      await page.getByTestId('library-group-device').click()
      await page.waitForURL(url => url.searchParams.get('group') === 'device' && url.searchParams.get('sort') === 'title', WAIT)
      const headings = page.locator('[data-testid^="library-section-"] h2')
      await expect.poll(() => headings.count(), WAIT).toBeGreaterThan(1)
      const names = await headings.allTextContents()
      expect(names).toEqual([...names].sort(new Intl.Collator('en', { sensitivity: 'base' }).compare))
      await screenshot(page, `library-grouped-${size.width}`)

      // A reload keeps the choice, and a device-type filter keeps it too.
      await page.goto(`${BASE_URL}${new URL(page.url()).pathname}${new URL(page.url()).search}`)
      await waitForHydration(page)
      expect(await page.getByTestId('library-group-device').getAttribute('aria-current')).toBe('true')
      expect(await page.getByTestId('library-sort-title').getAttribute('aria-current')).toBe('true')
      await page.locator('[data-testid^="filter-device-"]').first().click()
      await page.waitForURL(url => url.searchParams.has('deviceType'), WAIT)
      const url = new URL(page.url())
      expect(url.searchParams.get('group')).toBe('device')
      expect(url.searchParams.get('sort')).toBe('title')
    }
    finally {
      await browser.close()
    }
  }, 120_000)
})
