import { CaptureListQuery, type CaptureListItemDto } from '#shared/types/captures'
import type { Paginated } from '#shared/types/procedure-api'
import { listCaptures } from '../../services/captures/list'

// The whole team sees every capture, as it sees every record; filters narrow the list.
export default defineEventHandler(async (event) => {
  const actor = await requireUser(event)
  const query = await getValidatedQuery(event, parseWith(CaptureListQuery))
  return await listCaptures(query, actor) satisfies Paginated<CaptureListItemDto>
})
