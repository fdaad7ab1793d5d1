import { withQuery, type QueryObject } from 'ufo'
import { dataCacheName, offlineDb } from './offlineData'

// Copies of answers a page already has, put where the service worker looks for them when the
// connection is away (service-worker/sw.ts): a page rendered on the server fetched its data there,
// so the browser never saw those requests go by. Only for the signed-in person's own cache.

/** The address a `useFetch(path, { query })` asks for, so the kept copy answers that same request. */
export function fetchUrl(path: string, query?: QueryObject): string {
  return query ? withQuery(path, query) : path
}

/** Keeps `data` as the answer to GET `url` for this person. */
export async function keepOfflineCopy(url: string, data: unknown, userId: number | null): Promise<void> {
  if (userId === null || typeof caches === 'undefined' || data === null || data === undefined) return
  try {
    const cache = await caches.open(dataCacheName(userId))
    await cache.put(url, new Response(JSON.stringify(data), { headers: { 'content-type': 'application/json' } }))
  }
  catch {
    // A full or unavailable cache only means this page will not open offline.
  }
}

/** Keeps files (photos of a procedure's steps) that are not kept yet; fetched with the person's session. */
export async function keepOfflineFiles(urls: string[], userId: number | null): Promise<void> {
  if (userId === null || typeof caches === 'undefined' || !urls.length) return
  try {
    const cache = await caches.open(dataCacheName(userId))
    for (const url of urls) {
      if (await cache.match(url)) continue
      const res = await fetch(url, { credentials: 'same-origin' })
      if (res.ok) await cache.put(url, res)
    }
  }
  catch {
    // Offline or refused: the photos stay unkept and the page shows them when it can.
  }
}

/** Whether GET `url` has a kept copy for this person. */
export async function hasOfflineCopy(url: string, userId: number | null): Promise<boolean> {
  if (userId === null || typeof caches === 'undefined') return false
  const cache = await caches.open(dataCacheName(userId))
  return Boolean(await cache.match(url))
}

/** A procedure kept for reading with no connection: its answers and photos, and whether it is pinned. */
export interface KeptProcedure { slug: string, title: string, urls: string[], pinned: boolean, at: string }

/** How many procedures opened lately stay kept besides the pinned ones; the oldest make room. */
export const RECENT_PROCEDURES = 20

const keptKey = (userId: number) => `procedures-u${userId}`

export async function keptProcedures(userId: number | null): Promise<KeptProcedure[]> {
  const db = await offlineDb()
  if (!db || userId === null) return []
  return (await db.get('meta', keptKey(userId)) as KeptProcedure[] | undefined) ?? []
}

/**
 * Keeps a procedure a technician opened (or pinned): `answers` are the page's own requests with
 * what they answered, `files` its photos. Past RECENT_PROCEDURES unpinned ones, the oldest
 * opened is let go, answers and photos with it.
 */
export async function keepProcedure(userId: number | null, slug: string, title: string, answers: Array<{ url: string, data: unknown }>, files: string[], pin?: boolean): Promise<KeptProcedure[]> {
  const db = await offlineDb()
  if (!db || userId === null || typeof caches === 'undefined') return []
  for (const a of answers) await keepOfflineCopy(a.url, a.data, userId)
  await keepOfflineFiles(files, userId)
  const list = await keptProcedures(userId)
  const before = list.find(p => p.slug === slug)
  const entry: KeptProcedure = { slug, title, urls: [...answers.map(a => a.url), ...files], pinned: pin ?? before?.pinned ?? false, at: new Date().toISOString() }
  const next = [entry, ...list.filter(p => p.slug !== slug)]
  const recent = next.filter(p => !p.pinned)
  const gone = recent.slice(RECENT_PROCEDURES)
  if (gone.length) {
    const cache = await caches.open(dataCacheName(userId))
    const still = new Set(next.filter(p => !gone.includes(p)).flatMap(p => p.urls))
    for (const url of gone.flatMap(p => p.urls)) if (!still.has(url)) await cache.delete(url)
  }
  const kept = next.filter(p => !gone.includes(p))
  await db.put('meta', kept, keptKey(userId))
  return kept
}
