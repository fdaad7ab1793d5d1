/**
 * Saves that never overlap: a save asked for while one is in flight is answered by that one,
 * which then runs once more (the work changed meanwhile). Resolves to whether the last try
 * worked. Used by the autosaving stores (procedure drafts, records in progress).
 */
export function serialSave(once: () => Promise<boolean>) {
  let inflight: Promise<boolean> | null = null
  let again = false
  return {
    save(): Promise<boolean> {
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
    },
    get busy(): boolean {
      return inflight !== null
    },
  }
}
