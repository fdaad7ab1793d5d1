import { z } from 'zod'
import { acceptSymptom, toSymptomDto } from '../../../services/vocabulary'

const Params = z.object({ id: z.coerce.number().int().positive() })

export default defineEventHandler(async (event) => {
  const actor = await requireRole(event, 'editor')
  const { id } = await getValidatedRouterParams(event, parseWith(Params))
  return { symptom: toSymptomDto(await acceptSymptom(id, actor)) }
})
