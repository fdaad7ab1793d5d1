import type { CommonSymptomDto, ListDto } from '#shared/types/procedure-api'
import { commonSymptoms } from '../../services/vocabulary/symptoms'

// The team's most common symptoms (by repair records), for the search page's empty state.
export default defineEventHandler(async (event) => {
  await requireUser(event)
  return { data: await commonSymptoms() } satisfies ListDto<CommonSymptomDto>
})
