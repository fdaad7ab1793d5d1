import { z } from 'zod'
import type { SymptomSavedDto } from '#shared/types/vocabulary'
import { acceptSymptom, toSymptomDto } from '../../../services/vocabulary/symptoms'

const Params = z.object({ id: z.coerce.number().int().positive() })

export default defineEventHandler(async (event) => {
  const actor = await requireRole(event, 'editor')
  const { id } = await getValidatedRouterParams(event, parseWith(Params))
  return { symptom: toSymptomDto(await acceptSymptom(id, actor)) } satisfies SymptomSavedDto
})
