import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { DEMO, DEMO_PASSWORD, signedIn } from '../helpers/api'
import { BASE_URL, openBrowser, openHydrated, screenshot, signIn } from '../helpers/browser'

type Browser = Awaited<ReturnType<typeof openBrowser>>

// A phone propped beside the unit is 360 CSS px wide: no page may be wider, so nothing is read
// by scrolling sideways. Rows of chips wrap or scroll inside themselves; tables become lists.
const PHONE = 360

describe(`every page at ${PHONE} px`, () => {
  let browser: Browser
  const pages: string[] = ['/', '/procedures', '/procedures/vr240-stuck-at-full', '/procedures/vr240-stuck-at-full/history', '/procedures/new', '/records', '/records/new', '/my-work', '/search?q=flickers', '/search/waveform', '/captures', '/dashboard', '/review', '/vocabulary', '/admin/users', '/admin/mail']

  beforeAll(async () => {
    const admin = await signedIn(DEMO.admin)
    const record = (await admin.get('/api/records', { pageSize: 1, status: 'in_progress' })).body.data?.[0]
    if (record) pages.push(`/records/${record.id}`)
    const capture = (await admin.get('/api/captures')).body.data?.[0]
    if (capture) pages.push(`/captures/${capture.id}`)
    browser = await openBrowser({ width: PHONE, height: 740 })
    await signIn(browser.page, DEMO.admin, DEMO_PASSWORD)
  }, 120_000)

  afterAll(async () => {
    await browser?.close()
  })

  it('has no page wider than the screen', async () => {
    const { page } = browser
    const wide: string[] = []
    for (const path of pages) {
      await openHydrated(page, path)
      const { width, culprit } = await page.evaluate(() => {
        const limit = document.documentElement.clientWidth
        // The outermost element reaching past the right edge, to say where to look.
        const clipped = (el: Element) => {
          for (let up = el.parentElement; up; up = up.parentElement) if (/auto|scroll|hidden|clip/.test(getComputedStyle(up).overflowX)) return true
          return false
        }
        const past = [...document.querySelectorAll<HTMLElement>('body *')].find(el => el.getBoundingClientRect().right > limit + 0.5 && !clipped(el))
        return { width: document.documentElement.scrollWidth, culprit: past ? `${past.tagName.toLowerCase()}.${past.className}`.slice(0, 120) : '' }
      })
      await screenshot(page, `phone-360${path.replace(/[/?=]+/g, '-')}`)
      if (width > PHONE) wide.push(`${path}: ${width} px (${culprit})`)
    }
    expect(wide, `pages at ${BASE_URL}`).toEqual([])
  }, 300_000)

  it('the sign-in page too', async () => {
    const guest = await openBrowser({ width: PHONE, height: 740 })
    try {
      await openHydrated(guest.page, '/login')
      expect(await guest.page.evaluate(() => document.documentElement.scrollWidth)).toBeLessThanOrEqual(PHONE)
    }
    finally {
      await guest.close()
    }
  })
})
