import { z } from 'zod'
import type { EvidenceDto } from '#shared/types/records'
import { evidenceFor, evidenceForProcedure } from '../services/evidence/ranking'

const Query = z.object({
  symptoms: z.string().max(800).optional().transform(s => (s ? s.split(',').map(x => x.trim()).filter(Boolean).slice(0, 20) : [])),
  deviceType: z.string().trim().max(80).optional(),
  procedure: z.string().trim().max(100).optional(),
}).refine(q => q.procedure || q.deviceType, { message: 'give a procedure, or a device type (with symptoms)', path: ['deviceType'] })

export default defineEventHandler(async (event) => {
  await requireUser(event)
  const q = await getValidatedQuery(event, parseWith(Query))
  const ranked = q.procedure
    ? await evidenceForProcedure(q.procedure, { deviceType: q.deviceType, symptoms: q.symptoms })
    : await evidenceFor({ deviceType: q.deviceType!, symptoms: q.symptoms })
  return ranked satisfies EvidenceDto
})
