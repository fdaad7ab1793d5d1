import { mkdtempSync, rmSync, writeFileSync } from 'node:fs'
import { tmpdir } from 'node:os'
import { join } from 'node:path'
import sharp from 'sharp'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { DEMO, DEMO_PASSWORD, signedIn } from '../helpers/api'
import { makeContent } from '../helpers/content'
import { openBrowser, openHydrated, screenshot, signIn, waitForHydration } from '../helpers/browser'

type Browser = Awaited<ReturnType<typeof openBrowser>>
const WAIT = { timeout: 30_000 }
const stamp = Date.now().toString(36)

// A procedure of its own on a device type of its own (invented test data), so the evidence on
// its page starts from no records at all and the one closed here is the only one counted.
let slug = ''

const open = openHydrated

describe('guided diagnosis at the bench, in Chromium', () => {
  let browser: Browser
  let dir: string
  let photo: string

  beforeAll(async () => {
    const editor = await signedIn(DEMO.editor)
    const author = await signedIn(DEMO.author)
    const type = await editor.post('/api/device-types', { name: `Bench test dimmer ${stamp}`, description: 'Test device type.' })
    expect(type.status).toBe(201)
    const created = await author.post('/api/procedures', { content: makeContent({ title: `Dimmer stays dark ${stamp}`, deviceType: type.body.deviceType.slug, symptoms: ['does-not-dim'] }) })
    expect(created.status).toBe(201)
    expect((await author.post(`/api/revisions/${created.body.revision.id}/submit`)).status).toBe(200)
    expect((await editor.post(`/api/revisions/${created.body.revision.id}/approve`)).status).toBe(200)
    slug = created.body.procedure.slug

    dir = mkdtempSync(join(tmpdir(), 'benchlore-bench-photo-'))
    photo = join(dir, 'board.jpg')
    writeFileSync(photo, await sharp({ create: { width: 640, height: 480, channels: 3, background: { r: 40, g: 90, b: 50 } } }).jpeg().toBuffer())
    browser = await openBrowser()
    await signIn(browser.page, DEMO.technician, DEMO_PASSWORD)
  }, 120_000)

  afterAll(async () => {
    await browser?.close()
    if (dir) rmSync(dir, { recursive: true, force: true })
  })

  it('types readings, sees verdicts, closes with a cause and a photo, and the evidence on the procedure page follows', async () => {
    const { page } = browser
    await open(page, `/procedures/${slug}`)
    await expect.poll(() => page.getByTestId('cause-evidence-shorted-fet').textContent(), WAIT).not.toMatch(/found in 1 of/)
    await page.getByTestId('start-diagnosis').click()
    await page.waitForURL(url => url.pathname === '/records/new', WAIT)
    await waitForHydration(page)
    await page.getByTestId('record-new-model').fill(`VR-test ${stamp}`)
    await page.getByTestId('record-new-serial').fill('SN-0042')
    await page.getByTestId('record-new-start').click()
    await page.waitForURL(url => /^\/records\/\d+$/.test(url.pathname), WAIT)
    await waitForHydration(page)
    const recordPath = new URL(page.url()).pathname

    // The body diode reads almost nothing: a shorted MOSFET (common practice: a healthy body
    // diode reads 0.4–0.7 V on the diode-test range). Typed with a decimal comma.
    await page.getByTestId('reading-input-fet-diode').pressSequentially('0,02')
    await expect.poll(() => page.getByTestId('verdict-fet-diode').getAttribute('data-state'), WAIT).toBe('low')
    await expect.poll(() => page.getByTestId('reading-display-fet-diode').textContent(), WAIT).toMatch(/20\s*mV/)
    expect(await page.getByTestId('reading-raises-fet-diode').textContent()).toContain('Shorted switching MOSFET')
    await expect.poll(() => page.getByTestId('likely-raised-shorted-fet').isVisible(), WAIT).toBe(true)

    // Something unreadable is said so, not judged.
    const pot = page.getByTestId('reading-input-pot')
    await pot.pressSequentially('4x7')
    await expect.poll(() => page.getByTestId('verdict-pot').getAttribute('data-state'), WAIT).toBe('unreadable')
    // IEC 60062 RKM code: 470K is 470 kΩ, the nominal value of the track.
    await pot.fill('')
    await pot.pressSequentially('470K')
    await expect.poll(() => page.getByTestId('verdict-pot').getAttribute('data-state'), WAIT).toBe('in_range')
    // A readable reading marks its step done by itself; the mark follows the reading, not a tap.
    expect(await page.getByTestId('step-done-fet-diode').getAttribute('aria-pressed')).toBe('true')
    expect(await page.getByTestId('step-done-fet-diode').isDisabled()).toBe(true)

    // Saved as it goes: a reload brings the readings back.
    await expect.poll(() => page.getByTestId('record-save-status').getAttribute('data-state'), { timeout: 20_000 }).toBe('saved')
    await open(page, recordPath)
    await expect.poll(() => page.getByTestId('reading-input-fet-diode').inputValue(), WAIT).toBe('0,02')
    expect(await page.getByTestId('reading-input-pot').inputValue()).toBe('470K')
    expect(await page.getByTestId('verdict-fet-diode').getAttribute('data-state')).toBe('low')
    await screenshot(page, 'guided-diagnosis-readings')

    // Close with the confirmed cause, the outcome, time spent and a bench photo.
    await page.getByTestId(`close-cause-${slug}:shorted-fet`).click()
    await page.getByTestId('close-outcome-repaired').click()
    await page.getByTestId('close-minutes').fill('35')
    await page.getByTestId('photo-input').setInputFiles(photo)
    await page.locator('[data-testid^="photo-"] img').first().waitFor(WAIT)
    await page.getByTestId('close-record').click()
    await page.getByTestId('record-closed-notice').waitFor(WAIT).catch(async (error) => {
      await screenshot(page, 'guided-diagnosis-close-refused')
      throw new Error(`the record did not close: ${await page.getByTestId('close-problem').textContent().catch(() => '')} ${await page.locator('.field-error').allTextContents()}`, { cause: error })
    })
    await screenshot(page, 'guided-diagnosis-closed')
    expect(await page.getByTestId('summary-cause').textContent()).toContain('Shorted switching MOSFET')
    expect(await page.getByTestId('summary-step-fet-diode').textContent()).toMatch(/20\s*mV/)
    expect(await page.getByTestId('record-summary').getByTestId('bench-photos').locator('img').count()).toBe(1)
    // The evidence beside the closed record already counts it.
    await expect.poll(() => page.getByTestId('evidence-total').textContent(), WAIT).toMatch(/From 1 confirmed repair\./)

    // The closed record counts as evidence on the procedure page.
    await open(page, `/procedures/${slug}`)
    await expect.poll(() => page.getByTestId('cause-evidence-shorted-fet').textContent(), WAIT).toMatch(/found in 1 of 1 closed job\s*$/)
    expect(await page.getByTestId('cause-evidence-open-pot').textContent()).toMatch(/found in 0 of 1 closed job\s*$/)
    // The cause confirmed by the team now leads the list.
    expect(await page.locator('[data-testid="cause-list"] > li').first().getAttribute('data-testid')).toBe('cause-shorted-fet')
    await screenshot(page, 'guided-diagnosis-evidence')
  }, 240_000)
})
