import { SymptomCreateBody, type SymptomSavedDto } from '#shared/types/vocabulary'
import { createSymptom, toSymptomDto } from '../../services/vocabulary/symptoms'

export default defineEventHandler(async (event) => {
  const actor = await requireRole(event, 'editor')
  const body = await readValidatedBody(event, parseWith(SymptomCreateBody))
  const symptom = await createSymptom(body, actor, 'accepted')
  setResponseStatus(event, 201)
  return { symptom: toSymptomDto(symptom) } satisfies SymptomSavedDto
})
