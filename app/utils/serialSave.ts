/**
 * Saves that never overlap: a save asked for while one is in flight is answered by that one,
 * which then runs once more (the work changed meanwhile). Resolves to whether the last try
 * worked. `flush` waits until every change is on the server. Used by the autosaving stores
 * (procedure drafts, records in progress).
 */
export function serialSave(once: () => Promise<boolean>, opts: { dirty: () => boolean, blocked: () => boolean, beforeSave?: () => void }) {
  let inflight: Promise<boolean> | null = null
  let again = false

  function save(): Promise<boolean> {
    opts.beforeSave?.()
    if (inflight) {
      again = true
      return inflight
    }
    inflight = (async () => {
      let ok: boolean
      do {
        again = false
        ok = await once()
      } while (ok && again)
      return ok
    })().finally(() => {
      inflight = null
    })
    return inflight
  }

  /** False when the changes could not be saved (or a conflict waits for a decision). */
  async function flush(): Promise<boolean> {
    if (opts.blocked()) return false
    if (!opts.dirty() && !inflight) return true
    const ok = await save()
    return ok && !opts.dirty()
  }

  return {
    save,
    flush,
    get busy(): boolean {
      return inflight !== null
    },
  }
}

/** What an autosaving form tells its user, the most pressing first. */
export type SaveStatus = 'saved' | 'pending' | 'saving' | 'failed' | 'conflict'

export function saveStatusOf(state: { conflict: unknown, saving: boolean, failure: unknown, dirty: boolean }): SaveStatus {
  if (state.conflict) return 'conflict'
  if (state.saving) return 'saving'
  if (state.failure) return 'failed'
  return state.dirty ? 'pending' : 'saved'
}
