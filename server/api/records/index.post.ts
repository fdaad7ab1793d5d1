import { RecordCreateBody, type RecordReadDto } from '#shared/types/records'
import { toRecordDto } from '../../services/records/dto'
import { startRecord } from '../../services/records/lifecycle'

export default defineEventHandler(async (event) => {
  const actor = await requireUser(event)
  const body = await readValidatedBody(event, parseWith(RecordCreateBody))
  const record = await startRecord(body, actor)
  setResponseStatus(event, 201)
  return { record: await toRecordDto(record, actor) } satisfies RecordReadDto
})
