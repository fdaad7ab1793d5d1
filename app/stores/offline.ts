import { defineStore } from 'pinia'
import { computed, ref, toRaw } from 'vue'
import { apiErrorDetail, apiErrorMessage, apiErrorStatus } from '../utils/apiError'
import { keepOfflineCopy } from '../utils/offlineCopy'
import { offlineDb, type KeptConflict, type KeptRefusal, type QueuedSave } from '../utils/offlineData'
import type { RecordDto } from '#shared/types/records'

/** How often a waiting queue tries again while the server does not answer (the `online` event also starts it). */
export const SYNC_RETRY_MS = 15_000

/** Where a save made as the page goes away waits for the next page (app/stores/offline.ts, keepOnLeave). */
const LEFT_ON_LEAVE = 'benchlore-left-on-leave'

/** The save this person left as a page went away, taken out of its place. */
function takeLeftOnLeave(user: number): Omit<QueuedSave, 'seq' | 'userId' | 'queuedAt'> | null {
  try {
    const left = JSON.parse(localStorage.getItem(LEFT_ON_LEAVE) ?? 'null') as (QueuedSave | null)
    if (!left || left.userId !== user) return null
    localStorage.removeItem(LEFT_ON_LEAVE)
    return { recordId: left.recordId, body: left.body, baseVersion: left.baseVersion, work: left.work }
  }
  catch {
    return null
  }
}

export type SyncPhase = 'idle' | 'sending' | 'unreachable' | 'signed-out'

type SyncedListener = (recordId: number, record: RecordDto) => void
type ConflictListener = (recordId: number, theirs: RecordDto) => void

/**
 * Record saves typed with no connection (app/utils/offlineData.ts keeps them in IndexedDB), and
 * their way to the server once it answers again: in the order they were typed, one at a time,
 * each on the version the one before it produced. A record saved elsewhere meanwhile (409 with
 * the server's copy) keeps both versions and stops its own queue until the technician chooses
 * (app/stores/benchRecord.ts shows the choice); a refusal for any other reason keeps the saves
 * with the reason. A session that ended (401, 403) stops every queue and keeps it until the same
 * person signs in again. Nothing queued is dropped except by the technician's choice.
 */
export const useOfflineStore = defineStore('offline', () => {
  const online = ref(true)
  const userId = ref<number | null>(null)
  const ready = ref(false)
  const saves = ref<QueuedSave[]>([])
  const conflicts = ref<KeptConflict[]>([])
  const refusals = ref<KeptRefusal[]>([])
  const phase = ref<SyncPhase>('idle')
  /** How many saves the last sync delivered (the banner says so until the next change). */
  const delivered = ref(0)

  const waiting = computed(() => saves.value.length)
  const blocked = (recordId: number) => conflicts.value.some(c => c.recordId === recordId) || refusals.value.some(r => r.recordId === recordId)
  const savesOf = (recordId: number) => saves.value.filter(s => s.recordId === recordId)

  let running: Promise<void> | null = null
  let retry: ReturnType<typeof setTimeout> | null = null
  const syncedListeners = new Set<SyncedListener>()
  const conflictListeners = new Set<ConflictListener>()

  /** Loads what this person left waiting on this device. */
  async function start(user: number | null) {
    userId.value = user
    const db = await offlineDb()
    if (!db || user === null) {
      saves.value = []
      conflicts.value = []
      refusals.value = []
      ready.value = true
      return
    }
    saves.value = (await db.getAllFromIndex('saves', 'byUser', user)).sort((a, b) => a.seq! - b.seq!)
    const left = takeLeftOnLeave(user)
    if (left) await enqueue(left)
    conflicts.value = (await db.getAll('conflicts')).filter(c => c.userId === user)
    refusals.value = (await db.getAll('refusals')).filter(r => r.userId === user)
    if (phase.value === 'signed-out') phase.value = 'idle'
    ready.value = true
  }

  /**
   * The page is going away (reload, tab closed) with typing not kept yet: written at once, since
   * an IndexedDB write begun now may not finish before the page is gone. The next start() moves
   * it into the queue.
   */
  function keepOnLeave(save: Omit<QueuedSave, 'seq' | 'userId' | 'queuedAt'>) {
    if (userId.value === null) return
    try {
      localStorage.setItem(LEFT_ON_LEAVE, JSON.stringify({ ...save, userId: userId.value }))
    }
    catch {
      // Storage full or refused: the save begun through IndexedDB is the only copy.
    }
  }

  /** Whether a save of this record must wait in line behind earlier ones (or a choice). */
  function mustQueue(recordId: number): boolean {
    return savesOf(recordId).length > 0 || blocked(recordId)
  }

  /**
   * Keeps one save on this device. Its base is the version of the first save still waiting for
   * the record, since each waiting save builds on the one before it.
   */
  async function enqueue(save: Omit<QueuedSave, 'seq' | 'userId' | 'queuedAt'>): Promise<boolean> {
    const db = await offlineDb()
    if (!db || userId.value === null) return false
    const earlier = savesOf(save.recordId)[0]
    const entry: QueuedSave = {
      ...JSON.parse(JSON.stringify(save)) as typeof save,
      baseVersion: earlier?.baseVersion ?? save.baseVersion,
      userId: userId.value,
      queuedAt: new Date().toISOString(),
    }
    entry.seq = await db.add('saves', entry)
    saves.value = [...saves.value, entry]
    delivered.value = 0
    return true
  }

  /**
   * One record save from the guided view: straight to the server while it answers and nothing
   * waits before it; kept on this device otherwise (answers null: the record as the server holds
   * it is not known yet). A refusal from the server is the caller's to show, as before.
   */
  async function saveRecord(recordId: number, body: Record<string, unknown>, version: number, work: unknown): Promise<RecordDto | null> {
    const keep = () => enqueue({ recordId, body, baseVersion: version, work })
    if ((mustQueue(recordId) || !online.value) && await keep()) {
      void sync()
      return null
    }
    try {
      const res = await $fetch(`/api/records/${recordId}`, { method: 'PATCH', body: { ...body, version } })
      void keepOfflineCopy(`/api/records/${recordId}`, { record: res.record }, userId.value)
      return res.record
    }
    catch (error) {
      if (apiErrorStatus(error) !== undefined || !await keep()) throw error
      phase.value = 'unreachable'
      retry ??= setTimeout(() => void sync(), SYNC_RETRY_MS)
      return null
    }
  }

  /** Sends what waits, unless a send is already under way (that one carries on to the end). */
  function sync(): Promise<void> {
    running ??= drain().finally(() => {
      running = null
    })
    return running
  }

  async function drain() {
    if (retry) clearTimeout(retry)
    retry = null
    let sent = 0
    try {
      while (online.value && phase.value !== 'signed-out') {
        const next = saves.value.find(s => !blocked(s.recordId))
        if (!next) break
        phase.value = 'sending'
        const outcome = await sendOne(next)
        if (outcome === 'sent') sent++
        else if (outcome === 'stop') break
      }
    }
    catch {
      // The device's storage failed mid-way: what is still queued goes out at the next try.
      phase.value = 'unreachable'
    }
    if (phase.value === 'sending') phase.value = 'idle'
    if (sent) delivered.value = sent
    if (phase.value === 'unreachable' && saves.value.length) retry = setTimeout(() => void sync(), SYNC_RETRY_MS)
  }

  async function sendOne(entry: QueuedSave): Promise<'sent' | 'blocked' | 'stop'> {
    let record: RecordDto
    try {
      const res = await $fetch(`/api/records/${entry.recordId}`, { method: 'PATCH', body: { ...entry.body, version: entry.baseVersion } })
      record = res.record
    }
    catch (error) {
      return await refused(entry, error)
    }
    await landed(entry, record)
    return 'sent'

    async function landed(sentEntry: QueuedSave, answer: RecordDto) {
      const db = await offlineDb()
      // Raw copies: IndexedDB cannot store the page's reactive proxies.
      const rest = savesOf(sentEntry.recordId).filter(s => s.seq !== sentEntry.seq).map(s => ({ ...toRaw(s), baseVersion: answer.version }))
      if (db) {
        const tx = db.transaction('saves', 'readwrite')
        await Promise.all([tx.store.delete(sentEntry.seq!), ...rest.map(s => tx.store.put(s)), tx.done])
      }
      const moved = new Map(rest.map(s => [s.seq, s]))
      saves.value = saves.value.filter(s => s.seq !== sentEntry.seq).map(s => moved.get(s.seq) ?? s)
      phase.value = 'idle'
      await keepOfflineCopy(`/api/records/${answer.id}`, { record: answer }, userId.value)
      for (const listener of syncedListeners) listener(sentEntry.recordId, answer)
    }
  }

  async function refused(entry: QueuedSave, error: unknown): Promise<'blocked' | 'stop'> {
    const status = apiErrorStatus(error)
    if (status === undefined || status >= 500 || status === 408 || status === 429) {
      phase.value = 'unreachable'
      return 'stop'
    }
    if (status === 401 || status === 403) {
      phase.value = 'signed-out'
      return 'stop'
    }
    const db = await offlineDb()
    const at = new Date().toISOString()
    const current = apiErrorDetail(error).current as RecordDto | undefined
    if (status === 409 && current) {
      const kept: KeptConflict = { recordId: entry.recordId, userId: entry.userId, theirs: JSON.parse(JSON.stringify(current)), at }
      await db?.put('conflicts', kept)
      conflicts.value = [...conflicts.value.filter(c => c.recordId !== entry.recordId), kept]
      for (const listener of conflictListeners) listener(entry.recordId, current)
    }
    else {
      const kept: KeptRefusal = { recordId: entry.recordId, userId: entry.userId, status, message: apiErrorMessage(error, `The server answered ${status}.`), at }
      await db?.put('refusals', kept)
      refusals.value = [...refusals.value.filter(r => r.recordId !== entry.recordId), kept]
    }
    phase.value = 'idle'
    return 'blocked'
  }

  /**
   * The technician chose between the two versions (or took the server's copy after a refusal):
   * the waiting saves of the record are settled and its queue runs again.
   */
  async function settle(recordId: number) {
    const db = await offlineDb()
    const mine = savesOf(recordId)
    if (db) {
      const tx = db.transaction(['saves', 'conflicts', 'refusals'], 'readwrite')
      await Promise.all([
        ...mine.map(s => tx.objectStore('saves').delete(s.seq!)),
        tx.objectStore('conflicts').delete(recordId),
        tx.objectStore('refusals').delete(recordId),
        tx.done,
      ])
    }
    saves.value = saves.value.filter(s => s.recordId !== recordId)
    conflicts.value = conflicts.value.filter(c => c.recordId !== recordId)
    refusals.value = refusals.value.filter(r => r.recordId !== recordId)
    void sync()
  }

  function setOnline(now: boolean) {
    online.value = now
    if (now) void sync()
  }

  function onSynced(listener: SyncedListener) {
    syncedListeners.add(listener)
    return () => syncedListeners.delete(listener)
  }
  function onConflict(listener: ConflictListener) {
    conflictListeners.add(listener)
    return () => conflictListeners.delete(listener)
  }

  return {
    online, userId, ready, saves, conflicts, refusals, phase, delivered, waiting,
    start, mustQueue, enqueue, keepOnLeave, saveRecord, sync, settle, setOnline, blocked, savesOf, onSynced, onConflict,
  }
})
