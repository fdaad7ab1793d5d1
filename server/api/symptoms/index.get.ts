import type { ListDto, SymptomDto } from '#shared/types/procedure-api'
import { listSymptoms } from '../../services/vocabulary/symptoms'

export default defineEventHandler(async (event) => {
  await requireUser(event)
  return { data: await listSymptoms() } satisfies ListDto<SymptomDto>
})
