import { z } from 'zod'
import type { RevisionStateDto } from '#shared/types/procedure-api'
import { submitRevision } from '../../../services/procedures/revisions'

const Params = z.object({ id: z.coerce.number().int().positive() })

export default defineEventHandler(async (event) => {
  const actor = await requireRole(event, 'author')
  const { id } = await getValidatedRouterParams(event, parseWith(Params))
  const rev = await submitRevision(id, actor, useRuntimeConfig().appOrigin)
  return { revision: { id: rev.id, number: rev.number, state: rev.state } } satisfies RevisionStateDto
})
