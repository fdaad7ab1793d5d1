import { RecordCreateBody } from '#shared/types/records'
import { startRecord, toRecordDto } from '../../services/records'

export default defineEventHandler(async (event) => {
  const actor = await requireUser(event)
  const body = await readValidatedBody(event, parseWith(RecordCreateBody))
  const record = await startRecord(body, actor)
  setResponseStatus(event, 201)
  return { record: await toRecordDto(record, actor) }
})
