import { openBrowser, openHydrated, screenshot, signIn } from './tests/helpers/browser'
const PW = 'bench-demo-2026'
const { page, close } = await openBrowser({ width: 1280, height: 900 })
try {
  await signIn(page, 'editor@harbourlane.example', PW)
  await openHydrated(page, '/vocabulary')
  await page.locator('[data-testid^="edit-"]').first().click()
  await page.waitForTimeout(300)
  await screenshot(page, 'shot-vocabulary-edit')
  await page.getByTestId('tab-devices').click()
  await page.locator('[data-testid="device-types"] [data-testid^="edit-"]').first().click()
  await page.waitForTimeout(300)
  await screenshot(page, 'shot-vocabulary-device-edit')
  await openHydrated(page, '/search?q=flicker&hazard=mains')
  await page.waitForTimeout(500)
  await screenshot(page, 'shot-search-facets')
  await openHydrated(page, '/procedures?symptom=does-not-dim')
  await screenshot(page, 'shot-library-filter')
} finally { await close() }
