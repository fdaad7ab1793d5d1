import { z } from 'zod'
import { CommentBody } from '#shared/types/procedure'
import type { ReviewCommentSavedDto } from '#shared/types/procedure-api'
import { addComment } from '../../../services/procedures/comments'

const Params = z.object({ id: z.coerce.number().int().positive() })

export default defineEventHandler(async (event) => {
  const actor = await requireRole(event, 'author')
  const { id } = await getValidatedRouterParams(event, parseWith(Params))
  const body = await readValidatedBody(event, parseWith(CommentBody))
  const comment = await addComment(id, body, actor)
  setResponseStatus(event, 201)
  return { comment } satisfies ReviewCommentSavedDto
})
