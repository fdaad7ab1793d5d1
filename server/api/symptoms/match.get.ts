import { z } from 'zod'
import type { ListDto } from '#shared/types/procedure-api'
import type { SymptomMatchDto } from '#shared/types/search'
import { SYMPTOM_MATCH_LIMIT, matchSymptoms } from '../../services/search/symptom-match'
import { listSymptoms } from '../../services/vocabulary/symptoms'

// The editor's symptom picker, as the author types: the same typo tolerance as search.
const Query = z.object({
  q: z.string().max(200, 'is too long: type part of a symptom (at most 200 characters)').default(''),
  limit: z.coerce.number().int().min(1).max(20).default(SYMPTOM_MATCH_LIMIT),
})

export default defineEventHandler(async (event) => {
  await requireUser(event)
  const { q, limit } = await getValidatedQuery(event, parseWith(Query))
  return { data: matchSymptoms(await listSymptoms(), q, limit) } satisfies ListDto<SymptomMatchDto>
})
