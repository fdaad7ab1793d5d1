import { z } from 'zod'
import { SymptomMergeBody, type SymptomSavedDto } from '#shared/types/vocabulary'
import { mergeSymptom, toSymptomDto } from '../../../services/vocabulary/symptoms'

const Params = z.object({ id: z.coerce.number().int().positive() })

export default defineEventHandler(async (event) => {
  const actor = await requireRole(event, 'editor')
  const { id } = await getValidatedRouterParams(event, parseWith(Params))
  const { into } = await readValidatedBody(event, parseWith(SymptomMergeBody))
  return { symptom: toSymptomDto(await mergeSymptom(id, into, actor)) } satisfies SymptomSavedDto
})
