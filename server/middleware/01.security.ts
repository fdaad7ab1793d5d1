// Baseline response headers, and the CSRF check for unsafe methods: besides SameSite=Lax
// cookies, a browser request must come from Benchlore's own origin (Origin header, or
// Sec-Fetch-Site when Origin is absent). Non-browser clients send neither and are not at risk.
const SAFE = new Set(['GET', 'HEAD', 'OPTIONS'])

export default defineEventHandler((event) => {
  setResponseHeaders(event, {
    'X-Content-Type-Options': 'nosniff',
    'Referrer-Policy': 'same-origin',
    'X-Frame-Options': 'DENY',
    'Permissions-Policy': 'camera=(self), geolocation=(), microphone=()',
  })
  if (SAFE.has(event.method)) return
  const own = getRequestURL(event).origin
  const configured = useRuntimeConfig().appOrigin.replace(/\/$/, '')
  const origin = getRequestHeader(event, 'origin')
  if (origin && origin !== 'null' && origin !== own && origin !== configured) {
    throw createError({ statusCode: 403, message: 'Cross-site request refused.' })
  }
  const site = getRequestHeader(event, 'sec-fetch-site')
  if (!origin && site && site !== 'same-origin' && site !== 'none') {
    throw createError({ statusCode: 403, message: 'Cross-site request refused.' })
  }
  if (origin === 'null') throw createError({ statusCode: 403, message: 'Cross-site request refused.' })
})
