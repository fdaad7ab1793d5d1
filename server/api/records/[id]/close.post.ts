import { z } from 'zod'
import { RecordCloseBody, type RecordReadDto } from '#shared/types/records'
import { toRecordDto } from '../../../services/records/dto'
import { closeRecord } from '../../../services/records/lifecycle'

const Params = z.object({ id: z.coerce.number().int().positive() })

export default defineEventHandler(async (event) => {
  const actor = await requireUser(event)
  const { id } = await getValidatedRouterParams(event, parseWith(Params))
  const body = await readValidatedBody(event, parseWith(RecordCloseBody))
  return { record: await toRecordDto(await closeRecord(id, body, actor), actor) } satisfies RecordReadDto
})
