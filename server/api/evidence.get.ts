import { z } from 'zod'
import { evidenceFor, liveProcedureFacts } from '../services/evidence'

const Query = z.object({
  symptoms: z.string().max(800).optional().transform(s => (s ? s.split(',').map(x => x.trim()).filter(Boolean).slice(0, 20) : [])),
  deviceType: z.string().trim().max(80).optional(),
  procedure: z.string().trim().max(100).optional(),
}).refine(q => q.procedure || q.deviceType, { message: 'give a procedure, or a device type (with symptoms)', path: ['deviceType'] })

export default defineEventHandler(async (event) => {
  await requireUser(event)
  const q = await getValidatedQuery(event, parseWith(Query))
  if (q.procedure) {
    const live = await liveProcedureFacts(q.procedure)
    if (!live) throw createError({ statusCode: 404, message: 'No such live procedure.' })
    return await evidenceFor({ deviceType: q.deviceType ?? live.deviceType, symptoms: q.symptoms.length ? q.symptoms : live.symptoms, procedureId: live.procedureId, candidates: live.causes })
  }
  return await evidenceFor({ deviceType: q.deviceType!, symptoms: q.symptoms })
})
