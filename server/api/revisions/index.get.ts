import { z } from 'zod'
import { REVISION_STATES } from '#shared/types/procedure'
import { listRevisionsFor } from '../../services/procedures'

const Query = z.object({
  scope: z.enum(['mine', 'queue']).default('mine'),
  state: z.enum(REVISION_STATES).optional(),
})

export default defineEventHandler(async (event) => {
  const user = await requireRole(event, 'author')
  const { scope, state } = await getValidatedQuery(event, parseWith(Query))
  return { data: await listRevisionsFor(user, scope, state) }
})
