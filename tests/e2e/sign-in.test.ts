import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { DEMO, DEMO_PASSWORD } from '../helpers/api'
import { BASE_URL, openBrowser, screenshot, signIn, waitForHydration } from '../helpers/browser'

type Browser = Awaited<ReturnType<typeof openBrowser>>

// What each role should find in the main navigation.
const NAV: Record<keyof typeof DEMO, { sees: string[], notSees: string[] }> = {
  technician: { sees: ['nav-bench'], notSees: ['nav-people', 'nav-mail'] },
  author: { sees: ['nav-bench'], notSees: ['nav-people', 'nav-mail'] },
  editor: { sees: ['nav-bench'], notSees: ['nav-people', 'nav-mail'] },
  admin: { sees: ['nav-bench', 'nav-people', 'nav-mail'], notSees: [] },
}

describe('signing in as each role in Chromium', () => {
  let browser: Browser
  beforeAll(async () => {
    browser = await openBrowser()
  })
  afterAll(async () => {
    await browser?.close()
  })

  it('shows the sign-in page to a visitor and a clear message for a wrong password', async () => {
    const { page } = browser
    await page.goto(`${BASE_URL}/`)
    await page.waitForURL(/\/login/)
    await page.getByTestId('login-email').fill(DEMO.technician)
    await page.getByTestId('login-password').fill('definitely-wrong')
    await page.getByTestId('login-submit').click()
    await expect(page.getByTestId('login-error').textContent()).resolves.toMatch(/not right/)
    await screenshot(page, 'sign-in-wrong-password')
  })

  it.each(Object.keys(NAV) as Array<keyof typeof DEMO>)('%s sees the navigation of the role', async (role) => {
    const { context } = browser
    await context.clearCookies()
    const page = browser.page
    await signIn(page, DEMO[role], DEMO_PASSWORD)
    await page.getByTestId('whoami').waitFor()
    for (const id of NAV[role].sees) expect(await page.getByTestId(id).count(), `${role} sees ${id}`).toBe(1)
    for (const id of NAV[role].notSees) expect(await page.getByTestId(id).count(), `${role} does not see ${id}`).toBe(0)
    await screenshot(page, `home-${role}`)
    await page.goto(`${BASE_URL}/admin/users`)
    if (role === 'admin') {
      await page.getByTestId(`user-row-${DEMO.editor}`).waitFor()
    }
    else {
      await page.getByTestId('error-page').waitFor()
      expect(await page.getByTestId('error-page').textContent()).toMatch(/Not for your role/)
    }
    await screenshot(page, `admin-users-as-${role}`)
    await page.goto(`${BASE_URL}/`)
    await page.getByTestId('sign-out').click()
    await page.waitForURL(/\/login/)
  })

  it('works at 360 px wide (a phone at the bench)', async () => {
    const phone = await openBrowser({ width: 360, height: 760 })
    try {
      await signIn(phone.page, DEMO.technician, DEMO_PASSWORD)
      const width = await phone.page.evaluate(() => document.documentElement.scrollWidth)
      expect(width).toBeLessThanOrEqual(360)
      // The menu button works once the page has hydrated.
      await waitForHydration(phone.page)
      await phone.page.getByTestId('menu-toggle').click()
      await phone.page.getByTestId('sign-out').waitFor({ state: 'visible' })
      await screenshot(phone.page, 'home-technician-phone')
    }
    finally {
      await phone.close()
    }
  })

  it('shows a 404 page of its own for an unknown address', async () => {
    const { page } = browser
    await signIn(page, DEMO.technician, DEMO_PASSWORD)
    const res = await page.goto(`${BASE_URL}/no/such/page`)
    expect(res?.status()).toBe(404)
    expect(await page.getByTestId('error-page').textContent()).toMatch(/Nothing on this shelf/)
    await screenshot(page, 'not-found')
  })
})
