import { fileURLToPath } from 'node:url'

// Every value here can be overridden at run time by the matching NUXT_* environment variable
// (README.md, "Configuration"). The built server reads no .env file.
export default defineNuxtConfig({
  modules: ['@nuxtjs/tailwindcss', '@pinia/nuxt', 'nuxt-auth-utils', '@nuxt/eslint'],
  devtools: { enabled: false },
  app: {
    head: {
      htmlAttrs: { lang: 'en' },
      title: 'Benchlore',
      meta: [
        { name: 'viewport', content: 'width=device-width, initial-scale=1' },
        { name: 'description', content: 'Diagnostic procedures, readings and repair evidence for the repair bench.' },
        { name: 'theme-color', content: '#f6f1e7' },
      ],
      link: [{ rel: 'icon', type: 'image/svg+xml', href: '/favicon.svg' }],
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
  compatibilityDate: '2026-11-01',
  nitro: {
    experimental: { tasks: false },
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
  tailwindcss: { cssPath: false, viewer: false },
})
