import { z } from 'zod'
import { REVISION_STATES } from '#shared/types/procedure'
import type { ListDto, RevisionSummaryDto } from '#shared/types/procedure-api'
import { reviewQueue } from '../../services/procedures/review'
import { listOwnRevisions } from '../../services/procedures/revisions'

const Query = z.object({
  scope: z.enum(['mine', 'queue']).default('mine'),
  state: z.enum(REVISION_STATES).optional(),
})

// `mine`: the caller's own revisions, newest first; `queue`: awaiting review, oldest first.
export default defineEventHandler(async (event) => {
  const user = await requireRole(event, 'author')
  const { scope, state } = await getValidatedQuery(event, parseWith(Query))
  return { data: scope === 'queue' ? await reviewQueue(user) : await listOwnRevisions(user, state) } satisfies ListDto<RevisionSummaryDto>
})
