import { mkdtempSync, rmSync, writeFileSync } from 'node:fs'
import { tmpdir } from 'node:os'
import { join } from 'node:path'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { captureToCsv, synthesiseCapture, type SynthOptions } from '../../shared/utils/waveform/synth'
import { DEMO, DEMO_PASSWORD } from '../helpers/api'
import { BASE_URL, openBrowser, screenshot, signIn } from '../helpers/browser'

type Browser = Awaited<ReturnType<typeof openBrowser>>

// The fault the demo library keeps a reference signature of: a trailing-edge dimmer whose
// positive half-cycle runs a full sine while the negative half follows the knob (90° conduction).
const HALF_UNCONTROLLED: SynthOptions = {
  cut: 'half_uncontrolled', edge: 'trailing_edge', conductionAngleDeg: 90, faultPolarity: 'positive',
  frequencyHz: 50, sampleRateHz: 20_000, cycles: 10, vrms: 230, noiseVrms: 1, seed: 11,
}

describe('waveform captures in Chromium', () => {
  let browser: Browser
  let dir: string
  const file = (name: string, options: SynthOptions) => {
    const path = join(dir, name)
    writeFileSync(path, captureToCsv(synthesiseCapture(options), { timeUnit: 'ms', withUnitRow: true }))
    return path
  }

  beforeAll(async () => {
    dir = mkdtempSync(join(tmpdir(), 'benchlore-captures-'))
    browser = await openBrowser()
    await signIn(browser.page, DEMO.technician, DEMO_PASSWORD)
  })
  afterAll(async () => {
    await browser?.close()
    if (dir) rmSync(dir, { recursive: true, force: true })
  })

  it('uploads a capture, draws it, names the fault and opens the procedure it resembles', async () => {
    const { page } = browser
    await page.goto(`${BASE_URL}/captures`)
    await page.locator('[data-testid="capture-upload-form"][data-ready="true"]').waitFor()
    await page.getByTestId('capture-label').fill('Bench test: one half-cycle uncontrolled')
    await page.getByTestId('capture-file').setInputFiles(file('one-half-uncontrolled.csv', HALF_UNCONTROLLED))
    await expect(page.getByTestId('capture-file-name').textContent()).resolves.toBe('one-half-uncontrolled.csv')
    await page.getByTestId('capture-upload').click()
    await page.waitForURL(/\/captures\/\d+$/, { timeout: 30_000 })

    await page.locator('[data-testid="waveform-plot"] canvas').first().waitFor({ timeout: 20_000 })
    expect(await page.getByTestId('capture-title').textContent()).toContain('Bench test: one half-cycle uncontrolled')
    expect(await page.getByTestId('feature-cut').textContent()).toMatch(/positive half-cycle runs uncontrolled/i)
    // Trailing edge at 90° conduction: the negative half switches off at its peak.
    expect(await page.getByTestId('feature-cut-detail').textContent()).toMatch(/negative half switches off at 90°/)
    expect(await page.getByTestId('feature-frequency').textContent()).toContain('50.00')
    await screenshot(page, 'capture-half-uncontrolled')

    // Zooming asks the server for the window's own samples instead of stretching the overview.
    const detail = page.waitForResponse(r => /\/api\/captures\/\d+\/series\?/.test(r.url()) && r.status() === 200)
    await page.getByTestId('plot-two-cycles').click()
    const answer = await (await detail).json() as { t: number[], from: number, to: number }
    expect(answer.to - answer.from).toBeLessThan(0.1)
    expect(answer.t.length).toBeGreaterThan(100)
    await expect.poll(() => page.getByTestId('plot-detail').textContent()).toMatch(/every sample/)
    await screenshot(page, 'capture-half-uncontrolled-zoomed')

    // The seeded fault reference of this procedure is the nearest; it says what it stands for.
    const match = page.getByTestId('match-vr240-half-cycle-flicker')
    await match.waitFor()
    const row = page.locator('li', { has: match })
    expect(await row.getAttribute('data-kind')).toBe('fault')
    expect(await row.textContent()).toContain('What this fault looks like')
    await match.click()
    await page.waitForURL(`${BASE_URL}/procedures/vr240-half-cycle-flicker`)
    await page.getByTestId('procedure-revision').waitFor()
  })

  it('says plainly, next to the upload, why a file cannot be used', async () => {
    const { page } = browser
    await page.goto(`${BASE_URL}/captures`)
    await page.locator('[data-testid="capture-upload-form"][data-ready="true"]').waitFor()
    await page.getByTestId('capture-file').setInputFiles(file('too-short.csv', { ...HALF_UNCONTROLLED, cycles: 1.2 }))
    await page.getByTestId('capture-upload').click()
    const problem = page.getByTestId('capture-problem')
    await problem.waitFor({ timeout: 20_000 })
    expect(await problem.getAttribute('data-code')).toBe('TOO_FEW_CYCLES')
    expect(await problem.textContent()).toMatch(/two/)
    expect(page.url()).toBe(`${BASE_URL}/captures`)
    await screenshot(page, 'capture-unreadable')
  })

  it('works on a 360 px phone: the plot fits and the cut is named before the matches', async () => {
    const phone = await openBrowser({ width: 360, height: 760 })
    try {
      await signIn(phone.page, DEMO.technician, DEMO_PASSWORD)
      await phone.page.goto(`${BASE_URL}/captures`)
      await phone.page.locator('[data-testid="capture-upload-form"][data-ready="true"]').waitFor()
      await phone.page.getByTestId('capture-file').setInputFiles(file('phone.csv', { ...HALF_UNCONTROLLED, seed: 12 }))
      await phone.page.getByTestId('capture-upload').click()
      await phone.page.waitForURL(/\/captures\/\d+$/, { timeout: 30_000 })
      await phone.page.locator('[data-testid="waveform-plot"] canvas').first().waitFor({ timeout: 20_000 })
      expect(await phone.page.evaluate(() => document.documentElement.scrollWidth)).toBeLessThanOrEqual(360)
      const plot = (await phone.page.getByTestId('waveform-plot').boundingBox())!
      expect(plot.width).toBeLessThanOrEqual(360)
      const cut = (await phone.page.getByTestId('cut-summary').boundingBox())!
      const matches = (await phone.page.getByTestId('resembles').boundingBox())!
      expect(cut.y).toBeGreaterThan(plot.y)
      expect(cut.y).toBeLessThan(matches.y)
      await screenshot(phone.page, 'capture-phone')
    }
    finally {
      await phone.close()
    }
  })
})
