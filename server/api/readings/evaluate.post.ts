import { z } from 'zod'
import { MeasurementSpec, type ReadingEvaluationDto } from '#shared/types/measurement'
import { evaluateReading } from '#shared/utils/readings'

const Body = z.object({ value: z.string().max(60), spec: MeasurementSpec, failPointsTo: z.array(z.string().max(40)).max(20).optional() })

export default defineEventHandler(async (event) => {
  await requireUser(event)
  const { value, spec, failPointsTo } = await readValidatedBody(event, parseWith(Body))
  const result = evaluateReading(value, spec, failPointsTo)
  if (!result.ok) throw createError({ statusCode: 422, message: result.error, data: { fields: { value: result.error } } })
  const p = result.parsed
  return {
    parsed: { value: Number.isFinite(p.value) ? p.value : null, unit: p.unit, display: p.display, open: p.open },
    verdict: result.verdict,
    pass: result.pass,
    expected: result.expected,
    raises: result.raises,
  } satisfies ReadingEvaluationDto
})
