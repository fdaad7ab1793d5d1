import { z } from 'zod'
import { StartDraftBody } from '#shared/types/procedure'
import type { DraftSavedDto } from '#shared/types/procedure-api'
import { startDraft } from '../../../services/procedures/revisions'

const Params = z.object({ slug: z.string().min(1).max(100) })

export default defineEventHandler(async (event) => {
  const actor = await requireRole(event, 'author')
  const { slug } = await getValidatedRouterParams(event, parseWith(Params))
  const body = await readValidatedBody(event, parseWith(StartDraftBody))
  const rev = await startDraft(slug, actor, body.from)
  setResponseStatus(event, 201)
  return { revision: { id: rev.id, version: rev.version } } satisfies DraftSavedDto
})
