import { z } from 'zod'
import { LIBRARY_GROUPS, LIBRARY_SORTS, type Paginated, type ProcedureListItemDto } from '#shared/types/procedure-api'
import { listPublished } from '../../services/procedures/published'

const Query = z.object({
  deviceType: z.string().trim().max(80).optional(),
  symptom: z.string().trim().max(80).optional(),
  sort: z.enum(LIBRARY_SORTS).default('live'),
  group: z.enum(LIBRARY_GROUPS).default('none'),
  page: z.coerce.number().int().min(1).max(10_000).default(1),
  pageSize: z.coerce.number().int().min(1).max(100).default(20),
})

export default defineEventHandler(async (event) => {
  await requireUser(event)
  const query = await getValidatedQuery(event, parseWith(Query))
  return await listPublished(query) satisfies Paginated<ProcedureListItemDto>
})
