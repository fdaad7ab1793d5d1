import { apiErrorDetail, apiErrorMessage, apiErrorStatus } from '~/utils/apiError'

/**
 * Opens a new draft of a procedure in the editor: from its live revision, or from revision
 * `from` (one that was sent back). An author has one open draft per procedure, so when the
 * server answers that one exists, that draft opens instead. Resolves to a problem to show, or
 * '' once on the way to the editor.
 */
export async function openNewDraft(procedureSlug: string, opts: { from?: number, failed: string }): Promise<string> {
  try {
    const res = await $fetch(`/api/procedures/${encodeURIComponent(procedureSlug)}/revisions`, { method: 'POST', body: opts.from ? { from: opts.from } : {} })
    await navigateTo(`/revisions/${res.revision.id}/edit`)
    return ''
  }
  catch (error) {
    const open = apiErrorDetail(error).revisionId
    if (apiErrorStatus(error) === 409 && open) {
      await navigateTo(`/revisions/${open}/edit`)
      return ''
    }
    return apiErrorMessage(error, opts.failed)
  }
}
