import { z } from 'zod'
import { CommentPatchBody } from '#shared/types/procedure'
import type { ReviewCommentSavedDto } from '#shared/types/procedure-api'
import { resolveComment } from '../../services/procedures/comments'

const Params = z.object({ id: z.coerce.number().int().positive() })

export default defineEventHandler(async (event) => {
  const actor = await requireRole(event, 'author')
  const { id } = await getValidatedRouterParams(event, parseWith(Params))
  const { resolved } = await readValidatedBody(event, parseWith(CommentPatchBody))
  return { comment: await resolveComment(id, resolved, actor) } satisfies ReviewCommentSavedDto
})
