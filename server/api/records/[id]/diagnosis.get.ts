import { z } from 'zod'
import type { DiagnosisDto } from '#shared/types/records'
import { diagnoseRecord } from '../../../services/diagnosis/record'

const Params = z.object({ id: z.coerce.number().int().positive() })

// Every signed-in person reads every record, and so where its diagnosis stands.
export default defineEventHandler(async (event) => {
  await requireUser(event)
  const { id } = await getValidatedRouterParams(event, parseWith(Params))
  return await diagnoseRecord(id) satisfies DiagnosisDto
})
