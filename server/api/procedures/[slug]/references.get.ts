import { z } from 'zod'
import { listReferences } from '../../../services/captures/references'
import { findVisibleProcedure } from '../../../services/procedures/access'

const Params = z.object({ slug: z.string().min(1).max(100) })

export default defineEventHandler(async (event) => {
  const user = await requireUser(event)
  const { slug } = await getValidatedRouterParams(event, parseWith(Params))
  await findVisibleProcedure(slug, user)
  return { data: await listReferences(slug) }
})
