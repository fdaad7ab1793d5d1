import { z } from 'zod'
import type { ProcedureReadDto } from '#shared/types/procedure-api'
import { readPublished } from '../../../services/procedures/published'

const Params = z.object({ slug: z.string().min(1).max(100) })

export default defineEventHandler(async (event) => {
  const user = await requireUser(event)
  const { slug } = await getValidatedRouterParams(event, parseWith(Params))
  return await readPublished(slug, user) satisfies ProcedureReadDto
})
