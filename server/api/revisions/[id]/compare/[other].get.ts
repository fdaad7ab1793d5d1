import { z } from 'zod'
import type { RevisionComparisonDto } from '#shared/types/procedure-api'
import { compareRevisions } from '../../../../services/procedures/revisions'

// GET /api/revisions/[a]/compare/[b]: the route folder is named [id] so it shares its
// parameter name with the other revision routes.
const Params = z.object({ id: z.coerce.number().int().positive(), other: z.coerce.number().int().positive() })

export default defineEventHandler(async (event) => {
  const user = await requireUser(event)
  const { id, other } = await getValidatedRouterParams(event, parseWith(Params))
  return await compareRevisions(id, other, user) satisfies RevisionComparisonDto
})
