import { randomBytes } from 'node:crypto'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { User } from '../../server/db'
import { DEMO, DEMO_PASSWORD, signedIn } from '../helpers/api'
import { BASE_URL, openBrowser, openHydrated, screenshot, signIn, waitForHydration, watchPageProblems } from '../helpers/browser'
import { makeUser, testDb } from '../helpers/db'
import { waitForMail } from '../helpers/stack'

type Browser = Awaited<ReturnType<typeof openBrowser>>
const SIZES = [{ width: 1280, height: 900, name: 'wide' }, { width: 360, height: 760, name: 'phone' }] as const

describe('the people page asks before a role change or a deactivation', () => {
  let browser: Browser
  beforeAll(async () => {
    browser = await openBrowser()
    await signIn(browser.page, DEMO.admin, DEMO_PASSWORD)
  })
  afterAll(async () => {
    await browser?.close()
  })

  it('changes a role only after the inline confirmation; "keep" leaves it as it was', async () => {
    const person = await makeUser({ role: 'technician', name: `Role Check ${randomBytes(2).toString('hex')}` })
    const { page } = browser
    await openHydrated(page, '/admin/users')
    const role = page.getByTestId(`role-${person.email}`)
    await role.selectOption('editor')
    const ask = page.getByTestId(`confirm-${person.email}`)
    await ask.waitFor()
    expect(await ask.textContent()).toMatch(/Make .* an editor instead of technician\? They are signed out everywhere/)
    testDb()
    expect((await User.findByPk(person.id))!.role, 'nothing is sent before the confirmation').toBe('technician')
    await screenshot(page, 'people-confirm-role-wide')
    await page.getByTestId(`confirm-no-${person.email}`).click()
    await ask.waitFor({ state: 'detached' })
    expect(await role.inputValue()).toBe('technician')

    await role.selectOption('editor')
    await page.getByTestId(`confirm-yes-${person.email}`).click()
    await page.getByTestId('users-notice').waitFor()
    expect(await page.getByTestId('users-notice').textContent()).toMatch(/is now editor/)
    expect((await User.findByPk(person.id))!.role).toBe('editor')
  })

  it('deactivates only after the inline confirmation', async () => {
    const person = await makeUser({ name: `Leaver ${randomBytes(2).toString('hex')}` })
    const { page } = browser
    await openHydrated(page, '/admin/users')
    await page.getByTestId(`deactivate-${person.email}`).click()
    const ask = page.getByTestId(`confirm-${person.email}`)
    expect(await ask.textContent()).toMatch(/Deactivate .*\? They are signed out at once/)
    testDb()
    expect((await User.findByPk(person.id))!.active).toBe(true)
    await page.getByTestId(`confirm-yes-${person.email}`).click()
    await page.getByTestId(`reactivate-${person.email}`).waitFor()
    expect((await User.findByPk(person.id))!.active).toBe(false)
    expect(await page.getByTestId(`status-${person.email}`).textContent()).toMatch(/Deactivated/)
  })

  it('offers a new link or withdrawing it for an address already invited, and says which happened', async () => {
    const email = `again-${randomBytes(3).toString('hex')}@test.example`
    const { page } = browser
    await openHydrated(page, '/admin/users')
    await page.getByTestId('invite-email').fill(email)
    await page.getByTestId('invite-send').click()
    await page.getByTestId('users-notice').filter({ hasText: `Invitation sent to ${email}` }).waitFor()
    for (const [action, said] of [['resend', /A new link went to .*\. The earlier link no longer works\./], ['withdraw', /The invitation to .* is withdrawn: its link no longer works\./]] as const) {
      await page.getByTestId('invite-email').fill(email)
      await page.getByTestId('invite-send').click()
      const already = page.getByTestId('invite-already')
      await already.waitFor()
      expect(await already.textContent()).toMatch(/was invited on \d{1,2} [A-Z][a-z]{2} \d{4} and has not joined yet/)
      if (action === 'resend') await screenshot(page, 'people-already-invited-wide')
      await page.getByTestId(`invite-already-${action}`).click()
      await already.waitFor({ state: 'detached' })
      await page.getByTestId('users-notice').filter({ hasText: said }).waitFor()
    }
    await page.getByTestId(`status-${email}`).filter({ hasText: /Invitation withdrawn/ }).waitFor()
  })

  it.each(SIZES)('lays the page out at $width px', async (size) => {
    const shot = await openBrowser(size)
    try {
      await signIn(shot.page, DEMO.admin, DEMO_PASSWORD)
      await openHydrated(shot.page, '/admin/users')
      const width = await shot.page.evaluate(() => document.documentElement.scrollWidth)
      expect(width).toBeLessThanOrEqual(size.width)
      const someone = (await (await signedIn(DEMO.admin)).get('/api/users')).body.data.find((u: { role: string, active: boolean, email: string }) => u.role === 'technician' && u.active && u.email !== DEMO.technician)
      await shot.page.getByTestId(`deactivate-${someone.email}`).click()
      await screenshot(shot.page, `people-${size.name}`)
      await shot.page.getByTestId(`confirm-no-${someone.email}`).click()
    }
    finally {
      await shot.close()
    }
  })
})

describe('accepting an invitation', () => {
  it.each(SIZES)('judges the second password once it is typed, not while it is empty ($width px)', async (size) => {
    const admin = await signedIn(DEMO.admin)
    const email = `accept-${size.name}-${randomBytes(3).toString('hex')}@test.example`
    expect((await admin.post('/api/users/invite', { email, role: 'technician' })).status).toBe(201)
    const mail = await waitForMail(m => m.to.includes(email))
    const link = mail.text.match(/https?:\/\/\S+\/invite\/[\w-]+/)![0]
    const browser = await openBrowser(size)
    try {
      const { page } = browser
      await page.goto(`${BASE_URL}${new URL(link).pathname}`)
      await waitForHydration(page)
      // The message under the second password field, whatever marks it.
      const error = page.locator('#confirm ~ p')
      await page.locator('#password').fill('a-long-enough-passphrase')
      await page.locator('#confirm').focus()
      await page.locator('#name').focus()
      expect(await error.count(), 'an empty second field is no mismatch').toBe(0)
      await page.getByTestId('invite-submit').click()
      await error.waitFor()
      expect(await error.textContent(), 'sent with the second field empty').toBe('type the password again')
      await page.locator('#confirm').fill('a-long')
      expect(await error.textContent(), 'typing').not.toBe('type the password again')
      await page.locator('#name').focus()
      expect(await error.textContent()).toBe('does not match the password')
      await screenshot(page, `invite-mismatch-${size.name}`)
      await page.locator('#confirm').fill('a-long-enough-passphrase')
      expect(await error.count()).toBe(0)
    }
    finally {
      await browser.close()
    }
  })
})

describe('the sent-mail page', () => {
  it.each(SIZES)('writes dates in the app\'s format, the same on the server and in the browser ($width px)', async (size) => {
    // A time zone and a locale far from the server's: a date written in the browser's own local
    // format would differ from the server-rendered one.
    const browser = await openBrowser({ ...size, timezoneId: 'Pacific/Auckland', locale: 'en-US' })
    try {
      const { problems } = await watchPageProblems(browser.context, browser.page)
      await signIn(browser.page, DEMO.admin, DEMO_PASSWORD)
      const res = await browser.page.goto(`${BASE_URL}/admin/mail`)
      const html = await res!.text()
      await waitForHydration(browser.page)
      expect(problems, 'no hydration mismatch').toEqual([])
      // Each message's line: "to <address> · <date>".
      const dates = (await browser.page.locator('[data-testid="mail-list"] li button span:nth-child(2)').allTextContents()).map(t => t.split(' · ').at(-1)!.trim())
      expect(dates.length).toBeGreaterThan(0)
      for (const d of dates) expect(d).toMatch(/^\d{1,2} [A-Z][a-z]{2} \d{4}, \d{2}:\d{2} UTC$/)
      expect(html).toContain(dates[0])
      await screenshot(browser.page, `admin-mail-${size.name}`)
    }
    finally {
      await browser.close()
    }
  })
})

describe('finding records by unit', () => {
  it.each(SIZES)('narrows the list as a model, serial or job reference is typed ($width px)', async (size) => {
    const tech = await signedIn(DEMO.technician)
    const tag = randomBytes(3).toString('hex').toUpperCase()
    for (const unit of [{ model: `Lumen ${tag}`, serial: 'S-1', jobRef: 'J-1' }, { model: 'Other', serial: `SN${tag}`, jobRef: 'J-2' }]) {
      expect((await tech.post('/api/records', { procedureSlug: 'vr240-stuck-at-full', unit })).status).toBe(201)
    }
    const browser = await openBrowser(size)
    try {
      await signIn(browser.page, DEMO.technician, DEMO_PASSWORD)
      await openHydrated(browser.page, '/records')
      await browser.page.getByTestId('filter-q').fill(tag.toLowerCase())
      await browser.page.waitForURL(url => url.searchParams.get('q') === tag.toLowerCase())
      await browser.page.getByTestId('records-count').filter({ hasText: /\b2 records\b/ }).waitFor()
      const width = await browser.page.evaluate(() => document.documentElement.scrollWidth)
      expect(width).toBeLessThanOrEqual(size.width)
      await screenshot(browser.page, `records-search-${size.name}`)
    }
    finally {
      await browser.close()
    }
  })
})
