import { z } from 'zod'
import { HAZARDS } from '#shared/types/hazards'
import type { ProcedureSearchAnswer } from '#shared/types/search'

// Long or strange input is not an error a technician can fix by retyping, so it is cleaned
// (parseQuery drops control characters and punctuation, caps terms); only absurd sizes are 400.
const Query = z.object({
  q: z.string().max(2000, 'is too long: describe the symptom in fewer words (at most 2000 characters)').default(''),
  deviceType: z.string().trim().max(80).optional(),
  symptom: z.string().trim().max(80).optional(),
  hazard: z.enum(HAZARDS).optional(),
  limit: z.coerce.number().int().min(1).max(100).default(20),
  offset: z.coerce.number().int().min(0).max(10_000).default(0),
})

export default defineEventHandler(async (event) => {
  await requireUser(event)
  const query = await getValidatedQuery(event, parseWith(Query))
  const result = await useSearch().search(query)
  return {
    hits: result.hits.map(h => ({ slug: h.slug, title: h.title, deviceType: h.deviceType, symptoms: h.symptoms, hazards: h.hazards, score: h.score, highlights: h.highlights })),
    total: result.total,
    facets: result.facets,
    suggestions: result.suggestions,
    mode: result.mode,
  } satisfies ProcedureSearchAnswer
})
