import { z } from 'zod'
import { loadVisibleRevision } from '../../../services/procedures'
import { listFlags } from '../../../services/records'

const Params = z.object({ id: z.coerce.number().int().positive() })

export default defineEventHandler(async (event) => {
  const user = await requireUser(event)
  const { id } = await getValidatedRouterParams(event, parseWith(Params))
  await loadVisibleRevision(id, user)
  return { data: await listFlags(id) }
})
