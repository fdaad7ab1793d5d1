import { mkdirSync, mkdtempSync, rmSync } from 'node:fs'
import { tmpdir } from 'node:os'
import { join } from 'node:path'
import { chromium, type BrowserContext, type Page } from 'playwright-core'

export const BASE_URL = process.env.BENCHLORE_BASE_URL ?? 'http://127.0.0.1:3000'
export const ARTIFACTS = process.env.BENCHLORE_ARTIFACTS ?? join(process.cwd(), 'test-results')

/** Debian's Chromium, headless, with the flags this closed network needs. */
export async function openBrowser(opts: { width?: number, height?: number, timezoneId?: string, locale?: string } = {}): Promise<{ context: BrowserContext, page: Page, close: () => Promise<void> }> {
  const profile = mkdtempSync(join(tmpdir(), 'benchlore-chromium-'))
  const context = await chromium.launchPersistentContext(profile, {
    executablePath: process.env.CHROMIUM_PATH ?? '/usr/bin/chromium',
    headless: true,
    viewport: { width: opts.width ?? 1280, height: opts.height ?? 860 },
    timezoneId: opts.timezoneId,
    locale: opts.locale,
    args: ['--no-sandbox', '--disable-gpu', '--disable-quic', '--no-first-run', '--disable-background-networking', '--disable-component-update', '--disable-sync', '--disable-dev-shm-usage'],
  })
  const page = context.pages()[0] ?? await context.newPage()
  return {
    context,
    page,
    close: async () => {
      await context.close()
      rmSync(profile, { recursive: true, force: true })
    },
  }
}

export async function screenshot(page: Page, name: string): Promise<string> {
  mkdirSync(ARTIFACTS, { recursive: true })
  const file = join(ARTIFACTS, `${name}.png`)
  await page.screenshot({ path: file, fullPage: true })
  return file
}

/** Waits until Nuxt has hydrated the page: input typed before that is reset by hydration. */
export async function waitForHydration(page: Page, timeout = 30_000): Promise<void> {
  await page.waitForFunction(() => {
    const app = (document.querySelector('#__nuxt') as { __vue_app__?: { $nuxt?: { isHydrating?: boolean } } } | null)?.__vue_app__
    return app?.$nuxt?.isHydrating === false
  }, undefined, { timeout })
}

/** Opens a path of the app and waits until the page has hydrated. */
export async function openHydrated(page: Page, path: string, timeout = 45_000): Promise<void> {
  await page.goto(`${BASE_URL}${path}`)
  await waitForHydration(page, timeout)
}

export async function signIn(page: Page, email: string, password: string): Promise<void> {
  await page.goto(`${BASE_URL}/login`)
  await waitForHydration(page)
  await page.getByTestId('login-email').fill(email)
  await page.getByTestId('login-password').fill(password)
  await page.getByTestId('login-submit').click()
  await page.waitForURL(url => !url.pathname.startsWith('/login'), { timeout: 15_000 })
}

/**
 * What a page must never leave in the console: a Content-Security-Policy violation (reported by
 * the browser's `securitypolicyviolation` event, and its console message) or a hydration
 * mismatch (Vue reports it as a console error). Start it before opening the pages to check.
 */
export async function watchPageProblems(context: BrowserContext, page: Page): Promise<{ problems: string[] }> {
  const problems: string[] = []
  await context.exposeBinding('__benchloreCspViolation', (_source, text: string) => void problems.push(`CSP: ${text}`)).catch(() => undefined)
  await context.addInitScript(() => {
    document.addEventListener('securitypolicyviolation', (e) => {
      const report = (window as unknown as { __benchloreCspViolation?: (t: string) => void }).__benchloreCspViolation
      report?.(`${e.violatedDirective} blocked ${e.blockedURI || 'inline'} at ${e.sourceFile}:${e.lineNumber} (${location.pathname})`)
    })
  })
  page.on('console', (msg) => {
    const text = msg.text()
    if (/Content.Security.Policy|Refused to (load|execute|apply|evaluate|connect|create)|[Hh]ydration/.test(text)) problems.push(`console ${msg.type()}: ${text} (${page.url()})`)
  })
  page.on('pageerror', error => problems.push(`page error: ${error.message} (${page.url()})`))
  return { problems }
}
