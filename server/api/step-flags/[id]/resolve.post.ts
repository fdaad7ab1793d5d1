import { z } from 'zod'
import type { StepFlagResolvedDto } from '#shared/types/records'
import { resolveFlag } from '../../../services/records/step-flags'

const Params = z.object({ id: z.coerce.number().int().positive() })

export default defineEventHandler(async (event) => {
  const actor = await requireRole(event, 'author')
  const { id } = await getValidatedRouterParams(event, parseWith(Params))
  const flag = await resolveFlag(id, actor)
  return { flag: { id: flag.id, resolved: true } } satisfies StepFlagResolvedDto
})
