import { z } from 'zod'
import type { ListDto, RevisionSummaryDto } from '#shared/types/procedure-api'
import { listRevisionsOf } from '../../../services/procedures/revisions'

const Params = z.object({ slug: z.string().min(1).max(100) })

export default defineEventHandler(async (event) => {
  const user = await requireUser(event)
  const { slug } = await getValidatedRouterParams(event, parseWith(Params))
  return { data: await listRevisionsOf(slug, user) } satisfies ListDto<RevisionSummaryDto>
})
