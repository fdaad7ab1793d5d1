import { z } from 'zod'
import { RevisionSaveBody } from '#shared/types/procedure'
import type { DraftSavedDto } from '#shared/types/procedure-api'
import { saveDraft } from '../../../services/procedures/revisions'

const Params = z.object({ id: z.coerce.number().int().positive() })

export default defineEventHandler(async (event) => {
  const actor = await requireRole(event, 'author')
  const { id } = await getValidatedRouterParams(event, parseWith(Params))
  const body = await readValidatedBody(event, parseWith(RevisionSaveBody))
  const rev = await saveDraft(id, body, actor)
  return { revision: { id: rev.id, version: rev.version } } satisfies DraftSavedDto
})
