import { z } from 'zod'
import type { MatchGroupDto } from '#shared/types/captures'
import { matchCapture } from '../../../services/captures/references'
import { findCapture } from '../../../services/captures/store'

const Params = z.object({ id: z.coerce.number().int().positive() })

export default defineEventHandler(async (event) => {
  await requireUser(event)
  const { id } = await getValidatedRouterParams(event, parseWith(Params))
  return { data: await matchCapture(await findCapture(id)) } satisfies { data: MatchGroupDto[] }
})
