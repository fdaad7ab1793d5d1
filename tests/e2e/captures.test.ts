import { mkdtempSync, rmSync, writeFileSync } from 'node:fs'
import { tmpdir } from 'node:os'
import { join } from 'node:path'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { captureToCsv, synthesiseCapture, type SynthOptions } from '../../shared/utils/waveform/synth'
import { DEMO, DEMO_PASSWORD, signedIn } from '../helpers/api'
import { ARTIFACTS, BASE_URL, openBrowser, openHydrated, screenshot, signIn } from '../helpers/browser'
import { writeExport } from '../helpers/exports'

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
    expect(await row.textContent()).toContain('Fault trace')
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

  it('asks which column is the load voltage when the file has two voltage channels and a math channel, then analyses the choice', async () => {
    const { page } = browser
    const trailing = synthesiseCapture({ cut: 'trailing_edge', conductionAngleDeg: 100, frequencyHz: 50, sampleRateHz: 20_000, cycles: 10, vrms: 230, load: { resistanceOhm: 529 }, seed: 13 })
    const supply = synthesiseCapture({ frequencyHz: 50, sampleRateHz: 20_000, cycles: 10, vrms: 230 })
    const path = join(dir, 'two-channels.csv')
    writeFileSync(path, writeExport(trailing, {
      before: ['Record: bench 3', 'Sample interval: 50 us'],
      header: ['Time (s)', 'CH1 (V)', 'CH2 (V)', 'MATH (W)'],
      withCurrent: false,
      extra: k => [String(+supply.v[k]!.toPrecision(7)), String(+(trailing.v[k]! * trailing.i![k]!).toPrecision(7))],
    }))
    await page.goto(`${BASE_URL}/captures`)
    await page.locator('[data-testid="capture-upload-form"][data-ready="true"]').waitFor()
    await page.getByTestId('capture-label').fill('Two channels: load and supply')
    await page.getByTestId('capture-file').setInputFiles(path)
    await page.getByTestId('capture-upload').click()
    await page.getByTestId('column-choice').waitFor({ timeout: 20_000 })
    expect(await page.getByTestId('capture-problem').getAttribute('data-code')).toBe('AMBIGUOUS_COLUMNS')
    expect(await page.getByTestId('column-choice').textContent()).toContain('MATH (W)')
    await screenshot(page, 'capture-column-choice')
    await page.getByTestId('column-voltage-1').check()
    await page.getByTestId('column-current-none').check()
    await page.getByTestId('column-choice-submit').click()
    await page.waitForURL(/\/captures\/\d+$/, { timeout: 30_000 })
    expect(await page.getByTestId('feature-cut').textContent()).toMatch(/Trailing edge/)
  })

  it('lists the captures on file on the waveforms page, filtered by cut type', async () => {
    const { page } = browser
    await openHydrated(page, '/captures')
    await page.getByTestId('capture-list').waitFor()
    expect(await page.getByTestId('capture-list').locator('li').count()).toBeGreaterThan(0)
    await page.getByTestId('capture-filter-cut').selectOption('half_missing')
    await page.waitForURL(/cut=half_missing/)
    await expect.poll(async () => {
      const cuts = await page.locator('[data-testid="capture-list"] [data-testid="capture-glance"]').evaluateAll(els => els.map(e => e.getAttribute('data-cut')))
      return cuts.length > 0 && cuts.every(c => c === 'half_missing')
    }).toBe(true)
    await openHydrated(page, '/captures')
    await screenshot(page, 'captures-on-file-1280')
  })

  it('files a capture from a step of a repair record: the step shows its cut and figures, the record lists it', async () => {
    const api = await signedIn(DEMO.technician)
    const started = await api.post('/api/records', { procedureSlug: 'vr240-half-cycle-flicker', unit: { model: 'VR-240 rev C', serial: 'E2E-CAP', jobRef: 'E2E-CAPTURE' } })
    expect(started.status).toBe(201)
    const recordId = started.body.record.id as number
    const { page } = browser
    await openHydrated(page, `/records/${recordId}`)
    const step = page.getByTestId('step-capture-capture')
    await step.getByTestId('step-capture-toggle-capture').click()
    await step.getByTestId('capture-file').setInputFiles(file('step-capture.csv', HALF_UNCONTROLLED))
    await step.getByTestId('capture-upload').click()
    const item = step.locator('[data-testid^="step-capture-item-"]')
    await item.waitFor({ timeout: 30_000 })
    expect(await item.getByTestId('capture-glance-cut').textContent()).toBe('One half-cycle wrong')
    expect(await item.getByTestId('capture-glance').textContent()).toMatch(/90° conduction|180° \/ 90° conduction/)
    await expect.poll(() => page.getByTestId('record-captures').textContent()).toContain('One half-cycle wrong')
    await screenshot(page, 'record-with-capture-1280')
    const phone = await openBrowser({ width: 360, height: 760 })
    try {
      await signIn(phone.page, DEMO.technician, DEMO_PASSWORD)
      await openHydrated(phone.page, `/records/${recordId}`)
      await phone.page.getByTestId('record-captures').waitFor()
      expect(await phone.page.evaluate(() => document.documentElement.scrollWidth)).toBeLessThanOrEqual(360)
      await screenshot(phone.page, 'record-with-capture-360')
      await phone.page.getByTestId('step-capture-capture').screenshot({ path: join(ARTIFACTS, 'record-step-capture-360.png') })
      await phone.page.getByTestId('record-captures').screenshot({ path: join(ARTIFACTS, 'record-captures-360.png') })
      await openHydrated(phone.page, '/captures')
      expect(await phone.page.evaluate(() => document.documentElement.scrollWidth)).toBeLessThanOrEqual(360)
      await screenshot(phone.page, 'captures-on-file-360')
    }
    finally {
      await phone.close()
    }
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
