import { z } from 'zod'
import { DecisionBody } from '#shared/types/procedure'
import type { RevisionStateDto } from '#shared/types/procedure-api'
import { decideRevision } from '../../../services/procedures/review'

const Params = z.object({ id: z.coerce.number().int().positive() })

export default defineEventHandler(async (event) => {
  const actor = await requireRole(event, 'editor')
  const { id } = await getValidatedRouterParams(event, parseWith(Params))
  const { comment } = await readValidatedBody(event, parseWith(DecisionBody))
  const rev = await decideRevision(id, 'approve', comment, actor, useRuntimeConfig().appOrigin)
  return { revision: { id: rev.id, number: rev.number, state: rev.state } } satisfies RevisionStateDto
})
