import { describe, expect, it } from 'vitest'
import { DEMO, DEMO_PASSWORD } from '../helpers/api'
import { openBrowser, openHydrated, screenshot, signIn } from '../helpers/browser'

// The header carries the symptom box and the main navigation for every role: the admin has the
// most entries. At a bench screen's width the box keeps room for a few words and every entry
// stays on one line; on a phone the box takes the row and the menu lists one entry per line.

const ROLES = ['technician', 'author', 'editor', 'admin'] as const
const SIZES = [{ width: 1280, height: 860, minSearch: 220 }, { width: 360, height: 760, minSearch: 300 }]

interface Measure { label: string, height: number, lineHeight: number, paddingY: number }

describe('header layout', () => {
  it.each(SIZES)('keeps the symptom box wide and every navigation label on one line at $width px', async (size) => {
    const browser = await openBrowser(size)
    try {
      for (const role of ROLES) {
        await browser.context.clearCookies()
        await signIn(browser.page, DEMO[role], DEMO_PASSWORD)
        await openHydrated(browser.page, '/procedures')
        const search = await browser.page.getByTestId('header-search').boundingBox()
        expect(search, `${role}: header search shown`).not.toBeNull()
        expect(search!.width, `${role}: header search width at ${size.width} px`).toBeGreaterThanOrEqual(size.minSearch)
        if (size.width < 640) await browser.page.getByTestId('menu-toggle').click()
        await browser.page.locator('#main-nav').waitFor({ state: 'visible' })
        await browser.page.getByTestId('sign-out').waitFor({ state: 'visible' })
        const labels: Measure[] = await browser.page.$$eval('#main-nav a, header [data-testid="sign-out"], header [data-testid="whoami"]', els => els.map((el) => {
          const s = getComputedStyle(el)
          return {
            label: (el.textContent ?? '').trim(),
            height: el.getBoundingClientRect().height,
            lineHeight: Number.parseFloat(s.lineHeight),
            paddingY: Number.parseFloat(s.paddingTop) + Number.parseFloat(s.paddingBottom) + Number.parseFloat(s.borderTopWidth) + Number.parseFloat(s.borderBottomWidth),
          }
        }))
        expect(labels.length, `${role}: navigation entries, who is signed in, sign out`).toBeGreaterThanOrEqual(7)
        for (const m of labels) {
          // One line of text: the box is its padding plus less than two line heights.
          expect(m.height - m.paddingY, `${role}: "${m.label}" on one line at ${size.width} px`).toBeLessThan(m.lineHeight * 1.5)
        }
        await screenshot(browser.page, `header-${role}-${size.width}`)
      }
    }
    finally {
      await browser.close()
    }
  }, 180_000)
})
