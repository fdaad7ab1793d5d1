import { openDB, type DBSchema, type IDBPDatabase } from 'idb'

// What a phone keeps for working with no connection, shared by the pages and the service worker
// (service-worker/sw.ts): one IndexedDB database and one Cache Storage cache per person.
//
// - `account`: who the kept data belongs to. The service worker answers from a person's cache
//   only while that person is the one signed in on this device, so one person's records are
//   never shown to another.
// - `saves`: record saves made while the connection was away, in the order they were typed,
//   each with the record version it was based on (app/stores/offline.ts sends them).
// - `conflicts`: a record saved elsewhere meanwhile, with both versions, until the technician
//   chooses; `refusals`: a save the server refused for another reason, kept with that reason.

export const OFFLINE_DB = 'benchlore-offline'

/** The Cache Storage cache holding one person's kept answers (procedures, records, photos). */
export const dataCacheName = (userId: number) => `benchlore-data-u${userId}`
export const DATA_CACHE_PREFIX = 'benchlore-data-u'

export interface KeptAccount { id: number, role: string, name: string, email: string }

export interface QueuedSave {
  seq?: number
  userId: number
  recordId: number
  /** The PATCH body, exactly as the autosave would have sent it (without the version). */
  body: Record<string, unknown>
  /** The record version this save builds on; moved on as the saves before it reach the server. */
  baseVersion: number
  /** The technician's whole working copy at this save, to put back into the page after a reload. */
  work: unknown
  queuedAt: string
}

export interface KeptConflict {
  recordId: number
  userId: number
  /** The record as the server holds it (the answer of the refused save). */
  theirs: unknown
  at: string
}

export interface KeptRefusal {
  recordId: number
  userId: number
  status: number
  message: string
  at: string
}

interface OfflineSchema extends DBSchema {
  meta: { key: string, value: unknown }
  saves: { key: number, value: QueuedSave, indexes: { byRecord: number, byUser: number } }
  conflicts: { key: number, value: KeptConflict }
  refusals: { key: number, value: KeptRefusal }
}

export type OfflineDb = IDBPDatabase<OfflineSchema>

let opening: Promise<OfflineDb> | null = null

/** The database, opened once per page or worker; null where the browser has no IndexedDB. */
export function offlineDb(): Promise<OfflineDb> | null {
  if (typeof indexedDB === 'undefined') return null
  opening ??= openDB<OfflineSchema>(OFFLINE_DB, 1, {
    upgrade(db) {
      db.createObjectStore('meta')
      const saves = db.createObjectStore('saves', { keyPath: 'seq', autoIncrement: true })
      saves.createIndex('byRecord', 'recordId')
      saves.createIndex('byUser', 'userId')
      db.createObjectStore('conflicts', { keyPath: 'recordId' })
      db.createObjectStore('refusals', { keyPath: 'recordId' })
    },
  })
  return opening
}

export async function keptAccount(): Promise<KeptAccount | null> {
  const db = await offlineDb()
  return (await db?.get('meta', 'account') as KeptAccount | undefined) ?? null
}

export async function keepAccount(account: KeptAccount | null): Promise<void> {
  const db = await offlineDb()
  if (!db) return
  if (account) await db.put('meta', account, 'account')
  else await db.delete('meta', 'account')
}

/** Every person's kept answers except `keep`'s (their queued saves stay: they are not read data). */
export async function dropOtherCaches(keep: number | null): Promise<void> {
  if (typeof caches === 'undefined') return
  for (const name of await caches.keys()) {
    if (name.startsWith(DATA_CACHE_PREFIX) && name !== (keep === null ? '' : dataCacheName(keep))) await caches.delete(name)
  }
}
