// Baseline response headers, and what an unsafe request must show before any handler runs:
// - it comes from Benchlore's own origin, as configured (runtimeConfig.appOrigin), never as the
//   Host header claims: the Origin header, or when a browser sends none, Sec-Fetch-Site and the
//   Referer. SameSite=Lax cookies are the first line; this is the second (OWASP CSRF cheat
//   sheet). Non-browser clients send none of the three and carry no ambient cookie to abuse.
// - its body is no larger than the route reads, and in the route's content type: JSON, or
//   multipart on the two upload routes (server/utils/request-body.ts). An HTML form on another
//   site can send neither JSON nor, to a JSON route, anything the route would read.
// API answers are personal: none may be kept by a shared cache or the browser's disk cache
// unless its handler says otherwise (files do, as private).
const SAFE = new Set(['GET', 'HEAD', 'OPTIONS'])

const crossSite = () => createError({ statusCode: 403, message: 'Cross-site request refused.' })

function originOf(url: string): string | null {
  try {
    return new URL(url).origin
  }
  catch {
    return null
  }
}

export default defineEventHandler(async (event) => {
  setResponseHeaders(event, {
    'X-Content-Type-Options': 'nosniff',
    'Referrer-Policy': 'same-origin',
    'X-Frame-Options': 'DENY',
    'Permissions-Policy': 'camera=(self), geolocation=(), microphone=()',
  })
  const api = event.path.startsWith('/api/')
  if (api) setResponseHeader(event, 'Cache-Control', 'no-store')
  if (SAFE.has(event.method)) return

  const own = originOf(useRuntimeConfig().appOrigin)
  const origin = getRequestHeader(event, 'origin')
  if (origin !== undefined) {
    if (origin !== own) throw crossSite()
  }
  else {
    const site = getRequestHeader(event, 'sec-fetch-site')
    if (site && site !== 'same-origin' && site !== 'none') throw crossSite()
    const referer = getRequestHeader(event, 'referer')
    if (referer && originOf(referer) !== own) throw crossSite()
  }

  if (api) await guardRequestBody(event, bodyRule(event.path))
})
