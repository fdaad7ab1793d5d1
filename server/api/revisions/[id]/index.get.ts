import { z } from 'zod'
import { loadVisibleRevision, revisionDetail } from '../../../services/procedures'

const Params = z.object({ id: z.coerce.number().int().positive() })

export default defineEventHandler(async (event) => {
  const user = await requireUser(event)
  const { id } = await getValidatedRouterParams(event, parseWith(Params))
  const { rev, proc } = await loadVisibleRevision(id, user)
  return await revisionDetail(rev, proc, user)
})
