import { z } from 'zod'
import { AmendmentBody, type RecordReadDto } from '#shared/types/records'
import { toRecordDto } from '../../../services/records/dto'
import { amendRecord } from '../../../services/records/lifecycle'

const Params = z.object({ id: z.coerce.number().int().positive() })

export default defineEventHandler(async (event) => {
  const actor = await requireUser(event)
  const { id } = await getValidatedRouterParams(event, parseWith(Params))
  const body = await readValidatedBody(event, parseWith(AmendmentBody))
  const record = await amendRecord(id, body, actor)
  setResponseStatus(event, 201)
  return { record: await toRecordDto(record, actor) } satisfies RecordReadDto
})
