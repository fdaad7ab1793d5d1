import { randomUUID } from 'node:crypto'
import { fileURLToPath } from 'node:url'
import { palette } from './app/utils/palette'

// Each build's app shell gets a revision of its own, so a new build's service worker fetches the
// shell that matches its scripts (app/service-worker/sw.ts serves it when the network is away).
const SHELL_REVISION = randomUUID()

// Every value here can be overridden at run time by the matching NUXT_* environment variable
// (README.md, "Configuration"). The built server reads no .env file.
export default defineNuxtConfig({
  modules: ['@nuxtjs/tailwindcss', '@pinia/nuxt', 'nuxt-auth-utils', '@nuxt/eslint', '@vite-pwa/nuxt'],
  devtools: { enabled: false },
  app: {
    head: {
      htmlAttrs: { lang: 'en' },
      title: 'Benchlore',
      meta: [
        { name: 'viewport', content: 'width=device-width, initial-scale=1' },
        { name: 'description', content: 'Diagnostic procedures, readings and repair evidence for the repair bench.' },
        { name: 'theme-color', content: palette.paper.DEFAULT },
      ],
      link: [
        { rel: 'icon', type: 'image/svg+xml', href: '/favicon.svg' },
        { rel: 'apple-touch-icon', href: '/icons/apple-touch-180.png' },
        { rel: 'manifest', href: '/manifest.webmanifest' },
      ],
    },
  },
  css: ['~/assets/css/main.css'],
  runtimeConfig: {
    appOrigin: 'http://127.0.0.1:3000',
    db: { host: '127.0.0.1', port: 3307, name: 'benchlore', user: 'benchlore', password: '', hosts: '', syncWait: 0 },
    s3: { endpoint: '', region: 'us-east-1', bucket: 'benchlore', accessKeyId: '', secretAccessKey: '', forcePathStyle: true },
    smtp: { host: '127.0.0.1', port: 2525, secure: false, user: '', password: '' },
    mail: { from: 'Benchlore <benchlore@localhost>', captureDir: '', pollMs: 2000, retryBaseMs: 5000 },
    trustProxy: false,
    search: { pollMs: 1500 },
    session: {
      name: 'benchlore-session',
      maxAge: 60 * 60 * 12,
      cookie: { sameSite: 'lax', secure: false, httpOnly: true },
    },
  },
  // A separate build folder lets two dev servers run side by side (BENCHLORE_BUILD_DIR=.nuxt-b).
  buildDir: process.env.BENCHLORE_BUILD_DIR || '.nuxt',
  routeRules: {
    // The app shell the service worker keeps for opening pages with no connection: rendered
    // without the app (no person's data in it), then the app starts in the browser from there.
    '/app-shell': { ssr: false },
    // Checked for a new build at every visit; a kept copy would hold the phone on the old one.
    '/sw.js': { headers: { 'cache-control': 'no-cache' } },
  },
  compatibilityDate: '2026-11-01',
  nitro: {
    experimental: { tasks: false },
    // Scripts, styles and fonts are written beside themselves as .br and .gz at build time; the
    // server answers with whichever the browser accepts, so a phone on a slow link gets them small.
    compressPublicAssets: { gzip: true, brotli: true },
  },
  vite: {
    build: { chunkSizeWarningLimit: 800 },
    // Side-by-side dev servers (BENCHLORE_BUILD_DIR) must not share one dependency cache.
    cacheDir: process.env.BENCHLORE_BUILD_DIR ? `node_modules/.cache/vite-${process.env.BENCHLORE_BUILD_DIR.replace(/[^\w-]/g, '')}` : undefined,
  },
  typescript: { strict: true, typeCheck: false },
  telemetry: false,
  hooks: {
    // Benchlore's own error handler runs first: JSON errors for /api, 503 for an unreachable
    // database; everything else falls through to Nuxt's page-rendering handler.
    'nitro:config'(nitroConfig) {
      const own = fileURLToPath(new URL('./server/error-handler.ts', import.meta.url))
      const existing = nitroConfig.errorHandler
      nitroConfig.errorHandler = [own, ...(Array.isArray(existing) ? existing : existing ? [existing] : [])]
    },
  },
  // The session reaches server-rendered pages without an internal request: app/plugins/session.*.ts.
  auth: { loadStrategy: 'none' },
  // One house style, held by `npm run lint` (eslint.config.mjs builds on this).
  eslint: { config: { stylistic: true } },
  // Installable, and readable at the bench with no connection: app/service-worker/sw.ts keeps the
  // build's scripts and the app shell, the procedures and records a technician opened (per
  // person), and never a sign-in, a sign-out or a change. A new build waits until the next page
  // change or until the technician takes it (app/components/app/AppUpdateNotice.vue).
  pwa: {
    strategies: 'injectManifest',
    srcDir: '../service-worker',
    filename: 'sw.ts',
    registerType: 'prompt',
    injectRegister: false,
    client: { registerPlugin: true, installPrompt: false, periodicSyncForUpdates: 60 * 60 },
    manifest: {
      name: 'Benchlore',
      short_name: 'Benchlore',
      description: 'Diagnostic procedures, readings and repair evidence for the repair bench.',
      lang: 'en',
      start_url: '/',
      scope: '/',
      display: 'standalone',
      theme_color: palette.accent.DEFAULT,
      background_color: palette.paper.DEFAULT,
      icons: [
        { src: '/icons/icon-192.png', sizes: '192x192', type: 'image/png', purpose: 'any' },
        { src: '/icons/icon-512.png', sizes: '512x512', type: 'image/png', purpose: 'any' },
        { src: '/icons/maskable-512.png', sizes: '512x512', type: 'image/png', purpose: 'maskable' },
      ],
    },
    injectManifest: {
      globPatterns: ['_nuxt/**/*.{js,css,woff2}', 'icons/*.png', 'favicon.svg'],
      // The demo's and tests' large source maps or stats are never shipped to a phone.
      globIgnores: ['**/*.map', '_nuxt/builds/**'],
      maximumFileSizeToCacheInBytes: 3 * 1024 * 1024,
      additionalManifestEntries: [{ url: '/app-shell', revision: SHELL_REVISION }],
    },
    devOptions: { enabled: false },
  },
  tailwindcss: { cssPath: false, viewer: false },
})
