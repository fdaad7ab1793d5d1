import { SymptomCreateBody, type SymptomSavedDto } from '#shared/types/vocabulary'
import { createSymptom, toSymptomDto } from '../../services/vocabulary/symptoms'

// Authors propose; an editor accepts or merges before a revision using it can be published.
export default defineEventHandler(async (event) => {
  const actor = await requireRole(event, 'author')
  const body = await readValidatedBody(event, parseWith(SymptomCreateBody))
  const symptom = await createSymptom(body, actor, 'proposed')
  setResponseStatus(event, 201)
  return { symptom: toSymptomDto(symptom) } satisfies SymptomSavedDto
})
