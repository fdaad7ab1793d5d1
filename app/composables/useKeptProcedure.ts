import type { Ref } from 'vue'
import { fetchUrl, keepProcedure, keptProcedures } from '~/utils/offlineCopy'

interface ProcedureAnswer { revision: { content: { title: string } }, attachments: Record<string, { url: string, thumbnailUrl?: string | null }> }

/**
 * Keeps the procedure open on the reader for reading with no connection (its answer, its
 * evidence and its photos, in the signed-in person's cache), and pins it on request so that it
 * stays kept however many others are opened after it.
 */
export function useKeptProcedure(slug: string, data: Ref<ProcedureAnswer | null | undefined>, evidence: Ref<unknown>) {
  const { user } = useUserSession()
  const pinned = ref(false)
  const busy = ref(false)

  async function keep(pin?: boolean) {
    const answer = data.value
    const userId = user.value?.id ?? null
    if (!answer || userId === null) return
    const answers = [
      { url: `/api/procedures/${encodeURIComponent(slug)}`, data: answer },
      { url: fetchUrl('/api/evidence', { procedure: slug }), data: evidence.value },
    ]
    const files = Object.values(answer.attachments).flatMap(a => [a.url, a.thumbnailUrl].filter((u): u is string => Boolean(u)))
    const kept = await keepProcedure(userId, slug, answer.revision.content.title, answers, files, pin)
    pinned.value = kept.find(p => p.slug === slug)?.pinned ?? false
  }

  async function togglePin() {
    busy.value = true
    try {
      await keep(!pinned.value)
    }
    finally {
      busy.value = false
    }
  }

  onMounted(async () => {
    pinned.value = (await keptProcedures(user.value?.id ?? null)).find(p => p.slug === slug)?.pinned ?? false
    await keep()
  })

  return { pinned, busy, togglePin }
}
