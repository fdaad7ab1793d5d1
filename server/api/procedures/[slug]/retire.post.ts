import { z } from 'zod'
import { RetireBody } from '#shared/types/procedure'
import type { ProcedureRetiredDto } from '#shared/types/procedure-api'
import { retireProcedure } from '../../../services/procedures/review'

const Params = z.object({ slug: z.string().min(1).max(100) })

export default defineEventHandler(async (event) => {
  const actor = await requireRole(event, 'editor')
  const { slug } = await getValidatedRouterParams(event, parseWith(Params))
  const { reason } = await readValidatedBody(event, parseWith(RetireBody))
  const proc = await retireProcedure(slug, reason, actor)
  return { procedure: { id: proc.id, slug: proc.slug, status: proc.status } } satisfies ProcedureRetiredDto
})
