import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { DEMO, DEMO_PASSWORD, signedIn } from '../helpers/api'
import { makeContent } from '../helpers/content'
import { openBrowser, openHydrated, screenshot, signIn } from '../helpers/browser'

type Browser = Awaited<ReturnType<typeof openBrowser>>

// The editor's symptom picker forgives typos as search does. Demo vocabulary
// (scripts/seed/demo-content.ts): "Flickers on one half-cycle", "Does not dim".
describe('the symptom picker in Chromium', () => {
  let browser: Browser
  let revisionId: number
  beforeAll(async () => {
    const author = await signedIn(DEMO.author)
    const created = (await author.post('/api/procedures', { content: makeContent({ symptoms: ['runs-hot'] }) })).body
    revisionId = created.revision.id
    browser = await openBrowser()
    await signIn(browser.page, DEMO.author, DEMO_PASSWORD)
  })
  afterAll(async () => {
    await browser?.close()
  })

  it('finds "flikker" and "doesnt dim" and adds them', async () => {
    const { page } = browser
    await openHydrated(page, `/revisions/${revisionId}/edit`, 45_000)
    const box = page.getByTestId('symptom-search')
    await box.fill('flikker')
    await page.getByTestId('symptom-option-flickers-one-half-cycle').click()
    await page.getByTestId('symptom-chip-flickers-one-half-cycle').waitFor()

    await box.fill('doesnt dim')
    const option = page.getByTestId('symptom-option-does-not-dim')
    await option.waitFor()
    await screenshot(page, 'symptom-picker-typo')
    await box.press('Enter')
    await page.getByTestId('symptom-chip-does-not-dim').waitFor()
    expect(await page.getByTestId('symptoms-chosen').locator('li').count()).toBe(3)
  })
})
