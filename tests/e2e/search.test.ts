import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { Locator, Page } from 'playwright-core'
import { DEMO, DEMO_PASSWORD } from '../helpers/api'
import { BASE_URL, openBrowser, screenshot, signIn } from '../helpers/browser'

type Browser = Awaited<ReturnType<typeof openBrowser>>

// Demo library (scripts/seed/demo-content.ts): "VR-240 stuck at full brightness" is filed
// under "Does not dim" with the synonym "stuck at full brightness"; "VR-240 flickers on one
// half-cycle" under "Flickers on one half-cycle". Both are mains work.
const STUCK = 'vr240-stuck-at-full'
const HALF_CYCLE = 'vr240-half-cycle-flicker'
const TRAILING_EDGE_DIMMER = 'rotary-led-dimmer-trailing-edge'

/** The header box once the page has come alive (before that, keys would go to a dead input). */
async function headerBox(page: Page, path = '/procedures'): Promise<Locator> {
  await page.goto(`${BASE_URL}${path}`)
  const box = page.locator('[data-testid="header-search"][data-ready="true"]')
  await box.waitFor()
  return box
}

/** Waits until the list answers for exactly these words (not for a half-typed prefix of them). */
async function listAnswers(page: Page, popup: Locator, words: string): Promise<void> {
  const list = popup.getByRole('listbox')
  await expect.poll(() => list.getAttribute('aria-label'), { timeout: 15_000 }).toBe(`Procedures for ${words}`)
  await expect.poll(() => list.getAttribute('aria-busy'), { timeout: 15_000 }).toBe('false')
}

async function optionTestIds(popup: Locator): Promise<string[]> {
  return popup.getByRole('option').evaluateAll(els => els.map(e => e.getAttribute('data-testid') ?? ''))
}

describe('symptom-first search in Chromium', () => {
  let browser: Browser
  beforeAll(async () => {
    browser = await openBrowser()
    await signIn(browser.page, DEMO.technician, DEMO_PASSWORD)
  })
  afterAll(async () => {
    await browser?.close()
  })

  it('finds the procedure for a misspelled symptom as you type and opens it with the keyboard alone', async () => {
    const { page } = browser
    const box = await headerBox(page)
    await box.focus()
    const words = 'stuk at ful brightnes'
    await page.keyboard.type(words, { delay: 40 })

    const popup = page.getByTestId('header-search-popup')
    const option = popup.getByTestId(`search-option-${STUCK}`)
    await option.waitFor()
    await listAnswers(page, popup, words)
    expect(await box.getAttribute('aria-expanded')).toBe('true')

    // A junior must not have to scroll for it: among the first three.
    const ids = await optionTestIds(popup)
    const position = ids.indexOf(`search-option-${STUCK}`)
    expect(position, `options: ${ids.join(', ')}`).toBeGreaterThanOrEqual(0)
    expect(position).toBeLessThan(3)

    // Matched words are marked, the mains hazard is flagged, and the typo gets symptom suggestions.
    expect(await option.locator('mark').count()).toBeGreaterThan(0)
    expect(await option.getByTestId('search-hazard-mark').textContent()).toMatch(/Mains/)
    await popup.getByTestId('search-suggestion-does-not-dim').waitFor()

    for (let i = 0; i <= position; i++) await page.keyboard.press('ArrowDown')
    expect(await option.getAttribute('aria-selected')).toBe('true')
    expect(await box.getAttribute('aria-activedescendant')).toBe(await option.getAttribute('id'))
    await screenshot(page, 'search-header-misspelled')

    await page.keyboard.press('Enter')
    await page.waitForURL(url => url.pathname === `/procedures/${STUCK}`)
    expect(new URL(page.url()).pathname).toBe(`/procedures/${STUCK}`)
    await screenshot(page, 'search-opened-procedure')
  })

  it('closes the list on Esc and clears the words on a second Esc', async () => {
    const { page } = browser
    const box = await headerBox(page)
    await box.focus()
    const words = 'flikers on one half'
    await page.keyboard.type(words, { delay: 40 })
    const popup = page.getByTestId('header-search-popup')
    await popup.getByTestId(`search-option-${HALF_CYCLE}`).waitFor()
    await listAnswers(page, popup, words)
    expect((await optionTestIds(popup))[0]).toBe(`search-option-${HALF_CYCLE}`)

    await page.keyboard.press('ArrowDown')
    expect(await box.getAttribute('aria-activedescendant')).toBeTruthy()
    // ArrowUp from the first option wraps to the last: the way to the full results.
    await page.keyboard.press('ArrowUp')
    expect(await popup.getByTestId('search-option-all').getAttribute('aria-selected')).toBe('true')

    await page.keyboard.press('Escape')
    await popup.waitFor({ state: 'hidden' })
    expect(await box.getAttribute('aria-expanded')).toBe('false')
    expect(await box.getAttribute('aria-activedescendant')).toBeNull()
    expect(await box.inputValue()).toBe(words)

    await page.keyboard.press('Escape')
    expect(await box.inputValue()).toBe('')
    expect(new URL(page.url()).pathname).toBe('/procedures')
  })

  it('keeps the words and a facet filter in the address of the results page, through back and forward', async () => {
    const { page } = browser
    const box = await headerBox(page)
    await box.focus()
    await page.keyboard.type('flicker', { delay: 40 })
    const popup = page.getByTestId('header-search-popup')
    await listAnswers(page, popup, 'flicker')
    // Enter with no option chosen goes to the results page for the words.
    await page.keyboard.press('Enter')
    await page.waitForURL(url => url.pathname === '/search' && url.searchParams.get('q') === 'flicker')
    await page.getByTestId(`search-result-${HALF_CYCLE}`).waitFor()
    expect(await page.getByTestId('search-result-cc350-flicker-when-dimmed').count()).toBe(1)
    expect(await page.getByTestId('header-search').inputValue()).toBe('flicker')
    // No timings for developers on the page; at this width the facets show without a control.
    expect(await page.locator('main').innerText()).not.toMatch(/\btook\b|\d\s*ms\b/)
    expect(await page.getByTestId('search-facets-toggle').isVisible()).toBe(false)

    const facet = page.getByTestId(`facet-deviceType-${TRAILING_EDGE_DIMMER}`)
    const facetCount = Number((await facet.getByTestId('facet-count').textContent())?.trim())
    expect(facetCount).toBeGreaterThan(0)
    await facet.click()
    await page.waitForURL(url => url.searchParams.get('deviceType') === TRAILING_EDGE_DIMMER)
    let url = new URL(page.url())
    expect(url.pathname).toBe('/search')
    expect(url.searchParams.get('q')).toBe('flicker')
    await expect.poll(() => page.getByTestId(`facet-deviceType-${TRAILING_EDGE_DIMMER}`).getAttribute('aria-current')).toBe('true')
    await expect.poll(() => page.locator('article[data-testid^="search-result-"]').count()).toBe(facetCount)
    expect(await page.getByTestId('search-result-cc350-flicker-when-dimmed').count()).toBe(0)
    await screenshot(page, 'search-results-filtered')

    // The address alone reproduces the page (a shared link, a reload).
    await page.reload()
    await page.getByTestId(`search-result-${HALF_CYCLE}`).waitFor()
    // Back and forward are the router's once the page is alive; before that they only change the address.
    await page.locator('[data-testid="header-search"][data-ready="true"]').waitFor()
    expect(await page.getByTestId(`facet-deviceType-${TRAILING_EDGE_DIMMER}`).getAttribute('data-active')).toBe('true')
    expect(await page.getByTestId('search-result-cc350-flicker-when-dimmed').count()).toBe(0)

    await page.goBack()
    await page.waitForURL(u => u.searchParams.get('q') === 'flicker' && !u.searchParams.has('deviceType'))
    await page.getByTestId('search-result-cc350-flicker-when-dimmed').waitFor()
    await page.goForward()
    await page.waitForURL(u => u.searchParams.get('deviceType') === TRAILING_EDGE_DIMMER)
    url = new URL(page.url())
    expect(url.searchParams.get('q')).toBe('flicker')
    await expect.poll(() => page.getByTestId('search-result-cc350-flicker-when-dimmed').count()).toBe(0)
  })

  it('offers the team\'s common symptoms on the home page, each leading to its procedures', async () => {
    const { page } = browser
    await page.goto(`${BASE_URL}/`)
    await page.getByTestId('common-symptoms').waitFor()
    const chip = page.getByTestId('common-symptom-does-not-dim')
    await chip.waitFor()
    await screenshot(page, 'search-home')
    await chip.click()
    await page.waitForURL(url => url.pathname === '/search' && url.searchParams.get('symptom') === 'does-not-dim')
    await page.getByTestId(`search-result-${STUCK}`).waitFor()
    expect(await page.getByTestId('facet-symptom-does-not-dim').getAttribute('aria-current')).toBe('true')
  })

  it('works at 360 px: the home box answers as you type and nothing runs off the side', async () => {
    const phone = await openBrowser({ width: 360, height: 760 })
    try {
      const { page } = phone
      await signIn(page, DEMO.technician, DEMO_PASSWORD)
      await page.goto(`${BASE_URL}/`)
      const box = page.locator('[data-testid="home-search"][data-ready="true"]')
      await box.waitFor()
      await box.focus()
      await page.keyboard.type('dead no output', { delay: 40 })
      const popup = page.getByTestId('home-search-popup')
      await popup.getByTestId('search-option-cc350-dead').waitFor()
      await listAnswers(page, popup, 'dead no output')
      const bounds = await popup.boundingBox()
      expect(bounds).not.toBeNull()
      expect(bounds!.x).toBeGreaterThanOrEqual(0)
      expect(bounds!.x + bounds!.width).toBeLessThanOrEqual(360)
      expect(await page.evaluate(() => document.documentElement.scrollWidth)).toBeLessThanOrEqual(360)
      await screenshot(page, 'search-home-phone')

      await page.goto(`${BASE_URL}/search?q=flicker`)
      await page.getByTestId(`search-result-${HALF_CYCLE}`).waitFor()
      await page.locator('[data-testid="header-search"][data-ready="true"]').waitFor()
      expect(await page.evaluate(() => document.documentElement.scrollWidth)).toBeLessThanOrEqual(360)
      // Results first: the facets are folded behind one control, the first result on the first screen.
      const chip = page.getByTestId(`facet-deviceType-${TRAILING_EDGE_DIMMER}`)
      const toggle = page.getByTestId('search-facets-toggle')
      expect(await chip.isVisible()).toBe(false)
      expect(await toggle.getAttribute('aria-expanded')).toBe('false')
      const first = await page.locator('article[data-testid^="search-result-"]').first().boundingBox()
      expect(first!.y + 40).toBeLessThan(760)
      expect(await page.locator('main').innerText()).not.toMatch(/\btook\b|\d\s*ms\b/)
      await screenshot(page, 'search-results-phone')

      await toggle.click()
      expect(await toggle.getAttribute('aria-expanded')).toBe('true')
      await chip.waitFor()
      await screenshot(page, 'search-results-phone-filters')
      await chip.click()
      await page.waitForURL(url => url.searchParams.get('deviceType') === TRAILING_EDGE_DIMMER)
      // Chosen: folded again, the control says a filter is on.
      await expect.poll(() => toggle.textContent()).toMatch(/1 on/)
      expect(await chip.isVisible()).toBe(false)
      await screenshot(page, 'search-results-phone-filtered')
    }
    finally {
      await phone.close()
    }
  })
})
