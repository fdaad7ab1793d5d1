import { randomBytes } from 'node:crypto'
import { pagePolicy, withNonce } from '../utils/page-policy'

// What every server-rendered page is sent with, and what never reaches the page renderer.
//
// Content-Security-Policy: scripts and style elements only from Benchlore's own origin, plus the
// few Nuxt writes inline into each page (the import map, the payload, the runtime config, the
// component styles it inlines), which carry a fresh nonce per response. Only the chunks Nuxt
// builds around the app get one (`head` and `bodyAppend`); the rendered app (`body`) never does,
// so markup that slipped into rendered content could not run even with a script tag. No eval
// either (app/plugins/zod.client.ts keeps zod from trying it). Style
// attributes stay allowed (`style-src-attr`): the rendered bars and badges set their widths and
// colours that way, and an attribute can hold no script.
//
// Pages are rendered per person and per request: none may be stored (`no-store`), and the
// framework's name is not announced.

export default defineNitroPlugin((nitroApp) => {
  // An /api path that no route serves for this method falls through h3's router to the page
  // renderer (which would redirect to the sign-in page): answer it as the API does, in JSON.
  nitroApp.hooks.hook('render:before', ({ event }) => {
    const path = event.path.split('?')[0]!
    if (path === '/api' || path.startsWith('/api/')) {
      throw createError({ statusCode: 404, message: `No API route ${event.method} ${path}` })
    }
  })

  nitroApp.hooks.hook('render:html', (html, { event }) => {
    const nonce = randomBytes(18).toString('base64')
    event.context.cspNonce = nonce
    html.head = html.head.map(chunk => withNonce(chunk, nonce))
    html.bodyAppend = html.bodyAppend.map(chunk => withNonce(chunk, nonce))
  })

  nitroApp.hooks.hook('render:response', (response, { event }) => {
    const headers = (response.headers ??= {}) as Record<string, string>
    delete headers['x-powered-by']
    headers['cache-control'] = 'no-store'
    const nonce = event.context.cspNonce as string | undefined
    if (nonce) headers['content-security-policy'] = pagePolicy(nonce)
  })
})
