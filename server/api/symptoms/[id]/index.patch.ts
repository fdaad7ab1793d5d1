import { z } from 'zod'
import { SymptomPatchBody, type SymptomSavedDto } from '#shared/types/vocabulary'
import { toSymptomDto, updateSymptom } from '../../../services/vocabulary/symptoms'

const Params = z.object({ id: z.coerce.number().int().positive() })

export default defineEventHandler(async (event) => {
  const actor = await requireRole(event, 'editor')
  const { id } = await getValidatedRouterParams(event, parseWith(Params))
  const body = await readValidatedBody(event, parseWith(SymptomPatchBody))
  return { symptom: toSymptomDto(await updateSymptom(id, body, actor)) } satisfies SymptomSavedDto
})
