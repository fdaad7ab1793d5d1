import { mkdtempSync, rmSync } from 'node:fs'
import { tmpdir } from 'node:os'
import { join } from 'node:path'
import sharp from 'sharp'
import type { Locator, Page } from 'playwright-core'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { RevisionDetailDto } from '#shared/types/procedure-api'
import { DEMO, DEMO_PASSWORD, signedIn, type ApiClient } from '../helpers/api'
import { openBrowser, openHydrated, screenshot } from '../helpers/browser'

type Browser = Awaited<ReturnType<typeof openBrowser>>

// The machine is shared and the dev server compiles pages on first visit: waits are generous.
const WAIT = { timeout: 45_000 }
const STAGE_TIMEOUT = 180_000

const stamp = new Date().toISOString().replace(/\D/g, '').slice(0, 14)
const TITLE = `Trailing-edge dimmer dead after a surge ${stamp}`
// From the demo vocabulary (scripts/seed/demo-content.ts).
const DEVICE_TYPE = 'rotary-led-dimmer-trailing-edge'
const SYMPTOM = 'dead-no-output'

const FIRST_INSTRUCTION = 'Unplug the unit, discharge the bulk capacitor through a 1 kΩ resistor and check with the meter that it reads below 5 V.'
const SECOND_INSTRUCTION = 'Put the meter on the diode-test range and read the body diode of Q1, red lead on the source, black on the drain.'
const REVISED_INSTRUCTION = `Meter on the diode-test range: read the body diode of Q1 with the red lead on the source and the black on the drain (revised ${stamp}).`

// Waits for hydration: a click before that does nothing, and hydration resets inputs typed into early.
const open = (page: Page, path: string) => openHydrated(page, path, WAIT.timeout)

async function signInAs(page: Page, email: string): Promise<void> {
  // A dev server reloads the page when files change under it; another try or two covers that.
  for (let attempt = 1; ; attempt++) {
    await open(page, '/login')
    await page.getByTestId('login-email').fill(email)
    await page.getByTestId('login-password').fill(DEMO_PASSWORD)
    await page.getByTestId('login-submit').click()
    try {
      await page.waitForURL(url => !url.pathname.startsWith('/login'), { timeout: 20_000 })
      return
    }
    catch (error) {
      if (attempt >= 3) throw error
    }
  }
}

/** The editor's card of one step, by position: step keys follow their titles while new. */
const stepCard = (page: Page, index: number): Locator => page.locator(`#field-steps-${index}`)

async function waitUntilSaved(page: Page): Promise<void> {
  // A change is saved 1.5 s after the last keystroke; "saved" only counts once nothing is pending.
  await page.locator('[data-testid="save-status"][data-state="saved"]').waitFor({ timeout: 30_000 })
}

async function readRevision(api: ApiClient, id: number): Promise<RevisionDetailDto> {
  const res = await api.get<RevisionDetailDto>(`/api/revisions/${id}`)
  expect(res.status, `reading revision ${id} back`).toBe(200)
  return res.body
}

describe('writing, reviewing and publishing a procedure in Chromium', () => {
  let author: Browser
  let editor: Browser
  let technician: Browser
  let authorApi: ApiClient
  let workDir: string
  let photo: string

  let firstRevisionId = 0
  let secondRevisionId = 0
  let procedureSlug = ''
  let imageId = 0
  let measuredStepKey = ''

  beforeAll(async () => {
    workDir = mkdtempSync(join(tmpdir(), 'benchlore-review-flow-'))
    photo = join(workDir, 'q1-board.jpg')
    // A small bench photo: a green board with a dark TO-220 outline where Q1 sits.
    const q1 = Buffer.from('<svg xmlns="http://www.w3.org/2000/svg" width="640" height="480"><rect x="260" y="150" width="120" height="160" fill="#202020"/><text x="285" y="360" font-size="40" fill="#ffffff">Q1</text></svg>')
    await sharp({ create: { width: 640, height: 480, channels: 3, background: { r: 30, g: 110, b: 60 } } })
      .composite([{ input: q1 }])
      .jpeg({ quality: 80 })
      .toFile(photo)
    // One browser profile per person, so their sessions never mix.
    ;[author, editor, technician] = await Promise.all([openBrowser(), openBrowser(), openBrowser()])
    authorApi = await signedIn(DEMO.author, DEMO_PASSWORD)
  })

  afterAll(async () => {
    await Promise.all([author?.close(), editor?.close(), technician?.close()])
    if (workDir) rmSync(workDir, { recursive: true, force: true })
  })

  it('lets the author start a procedure, fill the structured editor, add a photo and submit it', async () => {
    const { page } = author
    await signInAs(page, DEMO.author)
    await open(page, '/procedures/new')
    await page.getByTestId('new-title').fill(TITLE)
    await page.getByTestId('new-device-type').selectOption(DEVICE_TYPE)
    await page.getByTestId('new-procedure-start').click()
    await page.waitForURL(/\/revisions\/\d+\/edit$/, WAIT)
    firstRevisionId = Number(new URL(page.url()).pathname.split('/')[2])
    expect(firstRevisionId).toBeGreaterThan(0)
    await page.getByTestId('editor').waitFor(WAIT)
    expect(await page.getByTestId('editor-heading').textContent()).toContain(TITLE)

    // Symptom from the shared vocabulary, found by a word of its name.
    await page.getByTestId('symptom-search').fill('dead')
    await page.getByTestId(`symptom-option-${SYMPTOM}`).click()
    await page.getByTestId(`symptom-chip-${SYMPTOM}`).waitFor()
    await page.getByTestId('hazard-mains').check()
    await page.getByTestId('hazard-caution-compact').waitFor()

    // Two causes, most likely first, each with its prior.
    await page.getByTestId('add-cause').click()
    await page.getByTestId('cause-name-0').fill('MOSFET Q1 shorted drain to source')
    await page.getByTestId('cause-prior-0').fill('0.6')
    await page.getByTestId('add-cause').click()
    await page.getByTestId('cause-name-1').fill('Fusible resistor R1 open')
    await page.getByTestId('cause-prior-1').fill('0.25')
    // Keys are made from the names and never shown to the author.
    expect(await page.getByTestId('cause-key-0').count()).toBe(0)

    // Step 1: making the unit safe. Step 2: a reading that points to the MOSFET when it fails.
    await page.getByTestId('add-step').click()
    await page.getByTestId('step-title-0').fill('Discharge the bulk capacitor')
    await stepCard(page, 0).getByTestId('md-steps.0.instruction').fill(FIRST_INSTRUCTION)
    await page.getByTestId('add-step').click()
    await page.getByTestId('step-title-1').fill('Diode-test Q1 source to drain')
    const second = stepCard(page, 1)
    await second.getByTestId('md-steps.1.instruction').fill(SECOND_INSTRUCTION)
    await second.locator('[data-testid^="measurement-toggle-"]').check()
    await second.locator('[data-testid^="measurement-quantity-"]').selectOption('diode_drop')
    await second.locator('[data-testid^="measurement-min-"]').fill('0.4')
    await second.locator('[data-testid^="measurement-max-"]').fill('0.9')
    // The reading is described the way the reader will show it once the window is complete.
    await expect.poll(() => second.locator('[data-testid^="measurement-expected-"]').textContent(), WAIT).toMatch(/0\.4.*0\.9/)
    // A reading near 0 V (a short) or OL (an open junction) points to the MOSFET.
    await second.getByTestId('verdict-cause-1-low-0').click()
    await second.getByTestId('verdict-cause-1-open-0').click()
    expect(await second.getByTestId('verdict-cause-1-low-0').getAttribute('aria-pressed')).toBe('true')

    // A bench photo through the editor's own upload.
    await second.locator('input[type="file"]').setInputFiles(photo)
    const caption = second.locator('[data-testid^="image-caption-"]')
    await caption.waitFor(WAIT)
    imageId = Number((await caption.getAttribute('data-testid'))!.replace('image-caption-', ''))
    expect(imageId).toBeGreaterThan(0)
    await page.getByTestId('change-note').fill('First revision: safe discharge, then the MOSFET check.')
    await waitUntilSaved(page)

    // What the autosave put on the server is what was typed.
    const saved = await readRevision(authorApi, firstRevisionId)
    procedureSlug = saved.procedureSlug
    expect(saved.state).toBe('draft')
    expect(saved.content.symptoms).toEqual([SYMPTOM])
    expect(saved.content.hazards).toContain('mains')
    expect(saved.content.causes.map(c => c.prior)).toEqual([0.6, 0.25])
    const measured = saved.content.steps[1]!
    measuredStepKey = measured.key
    expect(measured.measurement).toMatchObject({ quantity: 'diode_drop', unit: 'V', min: 0.4, max: 0.9 })
    const mosfetKey = saved.content.causes[0]!.key
    // The key follows the name while the cause is new.
    expect(mosfetKey).toMatch(/^mosfet_q1_shorted/)
    expect(measured.verdicts).toEqual({ low: { causes: [mosfetKey] }, open: { causes: [mosfetKey] } })
    expect(measured.imageIds).toEqual([imageId])
    await screenshot(page, 'review-flow-1-draft')

    await page.getByTestId('submit-revision').click()
    await page.waitForURL(/\/my-work$/, WAIT)
    await page.getByTestId('work-notice').waitFor(WAIT)
    expect(await page.getByTestId(`work-item-${firstRevisionId}`).textContent()).toContain('Awaiting review')
    expect((await readRevision(authorApi, firstRevisionId)).state).toBe('in_review')
    await screenshot(page, 'review-flow-2-submitted')
  }, STAGE_TIMEOUT)

  it('lets the editor find it in the queue, comment on a step and send it back', async () => {
    expect(firstRevisionId, 'the revision of the first stage').toBeGreaterThan(0)
    const { page } = editor
    await signInAs(page, DEMO.editor)
    await open(page, '/review')
    await page.getByTestId(`queue-${firstRevisionId}`).waitFor(WAIT)
    expect(await page.getByTestId(`queue-${firstRevisionId}`).textContent()).toContain(TITLE)
    await page.getByTestId(`queue-open-${firstRevisionId}`).click()
    await page.waitForURL(new RegExp(`/review/${firstRevisionId}$`), WAIT)
    await page.getByTestId('review-content').waitFor(WAIT)
    expect(await page.getByTestId('review-title').textContent()).toContain(TITLE)
    await page.getByTestId('review-first-revision').waitFor()

    const thread = page.getByTestId(`review-step-comments-${measuredStepKey}`)
    await thread.getByTestId(`comment-start-${measuredStepKey}`).click()
    await thread.getByTestId(`comment-body-${measuredStepKey}`).fill('Say which lead goes where: a reversed reading looks like a good part.')
    await thread.getByTestId(`comment-send-${measuredStepKey}`).click()
    await thread.locator('[data-testid^="comment-"][data-resolved]').first().waitFor(WAIT)

    await page.getByTestId('decide-request-changes').click()
    await page.getByTestId('decision-comment').fill('Nearly there: make the diode test in step 2 unambiguous.')
    await screenshot(page, 'review-flow-3-review')
    await page.getByTestId('decision-confirm').click()
    await page.waitForURL(/\/review$/, WAIT)
    await page.getByTestId('review-notice').waitFor(WAIT)
    expect(await page.getByTestId('review-notice').textContent()).toMatch(/sent back/)

    const back = await readRevision(authorApi, firstRevisionId)
    expect(back.state).toBe('changes_requested')
    expect(back.comments.some(c => c.stepKey === measuredStepKey)).toBe(true)
  }, STAGE_TIMEOUT)

  it('lets the author see it sent back, revise the step and submit again', async () => {
    expect(firstRevisionId, 'the revision of the first stage').toBeGreaterThan(0)
    const { page } = author
    await open(page, '/my-work')
    const item = page.getByTestId('work-returned').getByTestId(`work-item-${firstRevisionId}`)
    await item.waitFor(WAIT)
    expect(await item.textContent()).toContain('Sent back')
    await item.getByTestId(`comments-toggle-${firstRevisionId}`).click()
    await page.getByTestId(`comments-${firstRevisionId}`).getByText('reversed reading').waitFor(WAIT)
    await screenshot(page, 'review-flow-4-sent-back')

    await item.getByTestId(`revise-${firstRevisionId}`).click()
    await page.waitForURL(/\/revisions\/\d+\/edit$/, WAIT)
    secondRevisionId = Number(new URL(page.url()).pathname.split('/')[2])
    expect(secondRevisionId).not.toBe(firstRevisionId)
    await page.getByTestId('editor').waitFor(WAIT)
    // The new draft starts from the sent-back text.
    const instruction = stepCard(page, 1).getByTestId('md-steps.1.instruction')
    expect(await instruction.inputValue()).toBe(SECOND_INSTRUCTION)
    await instruction.fill(REVISED_INSTRUCTION)
    await page.getByTestId('change-note').fill('Said which lead goes on which pin.')
    await expect.poll(() => page.getByTestId('save-status').getAttribute('data-state'), WAIT).not.toBe('saved')
    await waitUntilSaved(page)
    const revised = await readRevision(authorApi, secondRevisionId)
    expect(revised.state).toBe('draft')
    expect(revised.content.steps[1]!.instruction).toBe(REVISED_INSTRUCTION)
    expect(revised.content.steps[1]!.imageIds).toEqual([imageId])

    await page.getByTestId('submit-revision').click()
    await page.waitForURL(/\/my-work$/, WAIT)
    await page.getByTestId('work-notice').waitFor(WAIT)
    expect((await readRevision(authorApi, secondRevisionId)).state).toBe('in_review')
    await screenshot(page, 'review-flow-5-resubmitted')
  }, STAGE_TIMEOUT)

  it('lets the editor approve and publish it', async () => {
    expect(secondRevisionId, 'the revision of the third stage').toBeGreaterThan(0)
    const { page } = editor
    await open(page, '/review')
    await page.getByTestId(`queue-open-${secondRevisionId}`).click()
    await page.waitForURL(new RegExp(`/review/${secondRevisionId}$`), WAIT)
    await page.getByTestId('review-content').waitFor(WAIT)
    // Nothing is live yet: the resubmission is compared with the revision that was sent back,
    // whose comments show beside the changes.
    expect(await page.getByTestId('review-first-revision').count()).toBe(0)
    expect(await page.getByTestId('review-compared-with').textContent()).toMatch(/revision 1, which was sent back/)
    expect(await page.getByTestId('review-sent-back').textContent()).toContain('reversed reading')
    const changedStep = page.getByTestId(`item-change-steps-${measuredStepKey}`)
    expect(await changedStep.getAttribute('data-kind')).toBe('changed')
    expect((await changedStep.locator('ins').allTextContents()).join(' ')).toMatch(/revised/)
    await screenshot(page, 'review-flow-6-resubmission')
    await page.getByTestId('decide-approve').click()
    await page.getByTestId('decision-form').waitFor()
    await screenshot(page, 'review-flow-6-approve')
    await page.getByTestId('decision-confirm').click()
    await page.waitForURL(/\/review$/, WAIT)
    expect(await page.getByTestId('review-notice').textContent()).toMatch(/live now/)
    expect(await page.getByTestId(`queue-${secondRevisionId}`).count()).toBe(0)
    expect((await readRevision(authorApi, secondRevisionId)).state).toBe('published')
  }, STAGE_TIMEOUT)

  it('shows the technician the live procedure with its caution, the revised step and the photo', async () => {
    expect(procedureSlug, 'the procedure of the first stage').not.toBe('')
    const { page } = technician
    await signInAs(page, DEMO.technician)
    await open(page, `/procedures/${procedureSlug}`)
    await page.getByTestId('procedure-title').waitFor(WAIT)
    expect(await page.getByTestId('procedure-title').textContent()).toContain(TITLE)
    expect(await page.getByTestId('procedure-revision').textContent()).toContain('Revision 2')
    // Mains work: the full caution at the top, a reminder pointing back to it before the first
    // step, neither dismissable; the full text once per page.
    await page.getByTestId('hazard-caution').waitFor()
    expect(await page.getByTestId('hazard-caution').textContent()).toMatch(/isolating transformer/i)
    expect(await page.getByTestId('hazard-caution').count()).toBe(1)
    const beforeSteps = page.locator('#steps').getByTestId('hazard-reminder')
    await beforeSteps.waitFor()
    const cautionFirst = await beforeSteps.evaluate((caution) => {
      const firstStep = document.querySelector('#steps article[data-testid^="step-"]')
      return !!firstStep && !!(caution.compareDocumentPosition(firstStep) & Node.DOCUMENT_POSITION_FOLLOWING)
    })
    expect(cautionFirst, 'the caution comes before step 1').toBe(true)
    expect(await page.getByTestId('hazard-caution').getByRole('button').count()).toBe(0)

    const step = page.getByTestId(`step-${measuredStepKey}`)
    const stepText = await step.textContent()
    expect(stepText).toContain(`revised ${stamp}`)
    expect(stepText).not.toContain(SECOND_INSTRUCTION)
    const thumb = page.getByTestId(`step-image-${imageId}`).locator('img')
    await thumb.scrollIntoViewIfNeeded()
    await expect.poll(() => thumb.evaluate(img => (img as HTMLImageElement).complete && (img as HTMLImageElement).naturalWidth), WAIT).toBeGreaterThan(0)
    expect(await thumb.getAttribute('src')).toContain(`/api/files/${imageId}`)
    await screenshot(page, 'review-flow-7-live')
  }, STAGE_TIMEOUT)
})
