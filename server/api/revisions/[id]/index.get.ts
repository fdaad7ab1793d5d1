import { z } from 'zod'
import type { RevisionDetailDto } from '#shared/types/procedure-api'
import { loadVisibleRevision } from '../../../services/procedures/access'
import { revisionDetail } from '../../../services/procedures/dto'

const Params = z.object({ id: z.coerce.number().int().positive() })

export default defineEventHandler(async (event) => {
  const user = await requireUser(event)
  const { id } = await getValidatedRouterParams(event, parseWith(Params))
  const { rev, proc } = await loadVisibleRevision(id, user)
  return await revisionDetail(rev, proc, user) satisfies RevisionDetailDto
})
