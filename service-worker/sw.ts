/// <reference lib="webworker" />
import { clientsClaim } from 'workbox-core'
import { cleanupOutdatedCaches, matchPrecache, precacheAndRoute, type PrecacheEntry } from 'workbox-precaching'
import { NavigationRoute, registerRoute } from 'workbox-routing'
import { NetworkFirst } from 'workbox-strategies'
import { dataCacheName, keptAccount } from '../app/utils/offlineData'

// Benchlore's service worker. What it keeps, and what it never does:
// - The build's scripts, styles, fonts and icons, and an app shell rendered without anyone's
//   data (/app-shell): a page opened with no connection starts from the shell, and the app reads
//   what it needs from the kept answers below.
// - The answers a technician needs at the bench (their session, procedures, evidence, records,
//   photos), network first, kept in the signed-in person's own cache and served from there only
//   while that same person is the one signed in here (app/utils/offlineData.ts).
// - Pages themselves are rendered per person and are never kept; nor is any request that is not
//   a GET (sign-in, sign-out, saves); nor any other API answer.
// - A new build waits until the page asks it to take over (SKIP_WAITING), which the app does at
//   the next page change or when the technician takes the update.

declare const self: ServiceWorkerGlobalScope & { __WB_MANIFEST: Array<PrecacheEntry | string> }

const SHELL = '/app-shell'
/** How long a page or an answer may take before the kept copy is used instead (a weak signal in a basement). */
const NETWORK_TIMEOUT_S = 4

precacheAndRoute(self.__WB_MANIFEST)
cleanupOutdatedCaches()
clientsClaim()

self.addEventListener('message', (event) => {
  if ((event.data as { type?: string } | null)?.type === 'SKIP_WAITING') void self.skipWaiting()
})

// Pages: always from the server while it answers; the shell when it does not.
registerRoute(new NavigationRoute(async ({ request }) => {
  try {
    return await fetchWithin(request, NETWORK_TIMEOUT_S * 1000)
  }
  catch {
    return (await matchPrecache(SHELL)) ?? Response.error()
  }
}, { denylist: [/^\/api\//, /^\/_nuxt\//] }))

/** The GET answers kept for reading at the bench. Anything else under /api is never kept. */
const KEPT = [
  /^\/api\/_auth\/session$/,
  /^\/api\/me$/,
  /^\/api\/procedures$/,
  /^\/api\/procedures\/[^/]+$/,
  /^\/api\/evidence$/,
  /^\/api\/records$/,
  /^\/api\/records\/\d+$/,
  /^\/api\/records\/\d+\/diagnosis$/,
  /^\/api\/captures$/,
  /^\/api\/files\/\d+$/,
  /^\/api\/symptoms\/common$/,
  /^\/api\/device-types$/,
]

registerRoute(
  ({ url, request }) => request.method === 'GET' && url.origin === self.location.origin && KEPT.some(p => p.test(url.pathname)),
  async ({ request, event }) => {
    const account = await keptAccount()
    // Nobody signed in on this device: nothing is kept or served from a cache.
    if (!account) return fetch(request)
    const strategy = new NetworkFirst({
      cacheName: dataCacheName(account.id),
      networkTimeoutSeconds: NETWORK_TIMEOUT_S,
      plugins: [{ cacheWillUpdate: ({ response }) => keepable(response, account.id) }],
    })
    return strategy.handle({ request, event })
  },
)

/** Only whole answers, and a session answer only when it is the kept person's own. */
async function keepable(response: Response, userId: number): Promise<Response | null> {
  if (response.status !== 200) return null
  if (!new URL(response.url).pathname.endsWith('/_auth/session')) return response
  const session = await response.clone().json().catch(() => null) as { user?: { id?: number } } | null
  return session?.user?.id === userId ? response : null
}

function fetchWithin(request: Request, ms: number): Promise<Response> {
  return new Promise((resolve, reject) => {
    const timer = setTimeout(() => reject(new Error('timeout')), ms)
    fetch(request).then(resolve, reject).finally(() => clearTimeout(timer))
  })
}
