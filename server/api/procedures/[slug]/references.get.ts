import { z } from 'zod'
import { listReferences } from '../../../services/captures/references'

const Params = z.object({ slug: z.string().min(1).max(100) })

export default defineEventHandler(async (event) => {
  await requireUser(event)
  const { slug } = await getValidatedRouterParams(event, parseWith(Params))
  return { data: await listReferences(slug) }
})
