import { useTimeoutFn } from '@vueuse/core'
import { computed, ref, watch, type Ref } from 'vue'
import { saveFailure } from '../utils/apiError'
import { saveStatusOf, serialSave } from '../utils/serialSave'

/** Both sides of a stale save: this screen's copy and the one saved elsewhere meanwhile. */
export interface SaveConflict<Mine, Theirs> { mine: Mine, theirs: Theirs }

export interface AutosaveOptions<Mine, Theirs extends { version: number }> {
  /** How long after the last change the save goes out. */
  delayMs: number
  /** The body as it would be sent; a change to it is an edit, and only an edit schedules a save. */
  body: () => unknown
  /** A plain copy of what is being saved, kept beside the server's version when the save is refused as stale. */
  snapshot: () => Mine
  /** Sends one save of `body` based on `version`; answers the version the server now holds. */
  send: (body: unknown, version: number) => Promise<number>
  /** Whether this screen may save at all just now (an open record its user can edit). */
  enabled?: () => boolean
  /** Puts a copy of this screen's work back into the form (after a conflict, or when a set-aside copy is brought back). */
  restore: (mine: Mine, theirs?: Theirs) => void
  /** Loads the version saved elsewhere as the current one (it calls `loaded` in turn). */
  load: (theirs: Theirs) => void
  /** Called on every edit. */
  onEdit?: () => void
  /** Field errors of a refused save, by field path. */
  onFieldErrors?: (fields: Record<string, string>) => void
}

/**
 * The lifecycle every autosaving form shares (procedure drafts, records in progress): each edit
 * is saved `delayMs` after the last one, with the version counter the edit was based on; saves
 * never overlap (`serialSave`); a stale counter (409 with the server's current copy) keeps both
 * copies until the user chooses, and the one not chosen is set aside rather than dropped.
 *
 * @example
 * const autosave = useAutosave({ delayMs: 900, body: () => work.value, snapshot: () => copy(work.value),
 *   send: async (body, version) => (await $fetch(url, { method: 'PATCH', body: { version, ...body } })).record.version,
 *   restore: mine => (work.value = copy(mine)), load })
 */
export function useAutosave<Mine, Theirs extends { version: number }>(opts: AutosaveOptions<Mine, Theirs>) {
  const version = ref(0)
  const saving = ref(false)
  const failure = ref('')
  const savedAt = ref<string | null>(null)
  const conflict = ref(null) as Ref<SaveConflict<Mine, Theirs> | null>
  const setAside = ref(null) as Ref<Mine | null>
  // Change detection compares serialised bodies: loading is not an edit, and an edit typed
  // while a save is in flight stays unsaved until the next one.
  const savedJson = ref('')
  const seenJson = ref('')

  const bodyJson = computed(() => JSON.stringify(opts.body()))
  const dirty = computed(() => seenJson.value !== savedJson.value)
  const status = computed(() => saveStatusOf({ conflict: conflict.value, saving: saving.value, failure: failure.value, dirty: dirty.value }))
  const enabled = () => opts.enabled?.() ?? true

  const pending = useTimeoutFn(() => void save(), opts.delayMs, { immediate: false })

  watch(bodyJson, (json) => {
    if (json === seenJson.value) return
    seenJson.value = json
    opts.onEdit?.()
    if (import.meta.server || !enabled()) return
    pending.start()
  })

  async function saveOnce(): Promise<boolean> {
    if (conflict.value || !enabled()) return false
    const json = bodyJson.value
    const sent = opts.snapshot()
    saving.value = true
    try {
      version.value = await opts.send(JSON.parse(json), version.value)
      savedJson.value = json
      savedAt.value = new Date().toISOString()
      failure.value = ''
      return true
    }
    catch (error) {
      const why = saveFailure<Theirs>(error)
      if ('current' in why) {
        conflict.value = { mine: sent, theirs: why.current }
        failure.value = ''
      }
      else {
        if (Object.keys(why.fields).length) opts.onFieldErrors?.(why.fields)
        failure.value = why.message
      }
      return false
    }
    finally {
      saving.value = false
    }
  }

  /** `save`: now, or once more after the save in flight; `flush`: until every change is on the server. */
  const saver = serialSave(saveOnce, { dirty: () => dirty.value, blocked: () => Boolean(conflict.value), beforeSave: () => pending.stop() })
  const { save, flush } = saver

  /** After the form was filled from the server: that body is the saved one, based on `at.version`. */
  function loaded(at: { version: number, savedAt?: string | null }) {
    pending.stop()
    version.value = at.version
    savedAt.value = at.savedAt ?? null
    failure.value = ''
    conflict.value = null
    markSaved()
  }

  /** The body as it stands is on the server. */
  function markSaved() {
    savedJson.value = bodyJson.value
    seenJson.value = bodyJson.value
  }

  /** A save sent some other way (the offline queue, app/stores/offline.ts) met a newer version: both are kept. */
  function raiseConflict(mine: Mine, theirs: Theirs) {
    pending.stop()
    conflict.value = { mine, theirs }
    failure.value = ''
  }

  /** Conflict: write this screen's copy over the one saved elsewhere. */
  function keepMine(): Promise<boolean> {
    const c = conflict.value
    if (!c) return Promise.resolve(false)
    version.value = c.theirs.version
    opts.restore(c.mine, c.theirs)
    conflict.value = null
    return save()
  }

  /** Conflict: carry on from the copy saved elsewhere; this screen's copy is set aside, not dropped. */
  function takeTheirs() {
    const c = conflict.value
    if (!c) return
    opts.load(c.theirs)
    setAside.value = c.mine
  }

  /** Brings the set-aside copy back as the current work (saved as a new change). */
  function restoreSetAside() {
    if (!setAside.value) return
    opts.restore(setAside.value)
    setAside.value = null
  }

  function discardSetAside() {
    setAside.value = null
  }

  return {
    version, saving, failure, savedAt, conflict, setAside, savedJson, seenJson,
    dirty, status,
    save, flush, loaded, markSaved, raiseConflict, keepMine, takeTheirs, restoreSetAside, discardSetAside,
    /** Drops the save waiting for a pause in typing (the caller is about to save some other way). */
    cancelPending: () => pending.stop(),
    /** A save is on its way to the server. */
    busy: () => saver.busy,
  }
}
