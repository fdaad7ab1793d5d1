import type { Paginated } from '#shared/types/procedure-api'
import { RecordListQuery, type RecordListItemDto } from '#shared/types/records'
import { listRecords } from '../../services/records/listing'

// The whole team sees every record: the records are the team's shared evidence.
export default defineEventHandler(async (event) => {
  await requireUser(event)
  const query = await getValidatedQuery(event, parseWith(RecordListQuery))
  return await listRecords(query) satisfies Paginated<RecordListItemDto>
})
