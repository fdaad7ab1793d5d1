import { z } from 'zod'
import { MeasurementSpec, type ReadingEvaluationDto } from '#shared/types/measurement'
import { VerdictMap, verdictCauses } from '#shared/types/verdicts'
import { evaluateReading } from '#shared/utils/readings'

const Body = z.object({
  value: z.string().max(60),
  spec: MeasurementSpec,
  failPointsTo: z.array(z.string().max(40)).max(20).optional(),
  /** The step's verdict map, so `raises` names the causes of the verdict read. */
  verdicts: VerdictMap.optional(),
})

export default defineEventHandler(async (event) => {
  await requireUser(event)
  const { value, spec, failPointsTo, verdicts } = await readValidatedBody(event, parseWith(Body))
  const result = evaluateReading(value, spec, failPointsTo, { ask: true })
  if (!result.ok) throw createError({ statusCode: 422, message: result.error, data: { fields: { value: result.error } } })
  const p = result.parsed
  const questioned = result.verdict === null ? result : null
  return {
    parsed: { value: Number.isFinite(p.value) ? p.value : null, unit: p.unit, display: p.display, open: p.open },
    verdict: result.verdict,
    pass: result.pass,
    expected: result.expected,
    raises: result.verdict !== null && !result.pass ? verdictCauses({ measurement: spec, failPointsTo, verdicts }, result.verdict) : [],
    question: questioned?.question ?? null,
    suggestion: questioned?.suggestion ?? null,
  } satisfies ReadingEvaluationDto
})
