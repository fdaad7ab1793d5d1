import { z } from 'zod'
import type { ListDto } from '#shared/types/procedure-api'
import type { StepFlagDto } from '#shared/types/records'
import { loadVisibleRevision } from '../../../services/procedures/access'
import { listFlags } from '../../../services/records/step-flags'

const Params = z.object({ id: z.coerce.number().int().positive() })

export default defineEventHandler(async (event) => {
  const user = await requireUser(event)
  const { id } = await getValidatedRouterParams(event, parseWith(Params))
  await loadVisibleRevision(id, user)
  return { data: await listFlags(id) } satisfies ListDto<StepFlagDto>
})
