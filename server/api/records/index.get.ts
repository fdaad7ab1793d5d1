import { RecordListQuery } from '#shared/types/records'
import { listRecords } from '../../services/records'

// The whole team sees every record: the records are the team's shared evidence.
export default defineEventHandler(async (event) => {
  await requireUser(event)
  const query = await getValidatedQuery(event, parseWith(RecordListQuery))
  return await listRecords(query)
})
