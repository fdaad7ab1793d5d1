import { z } from 'zod'
import { AmendmentBody } from '#shared/types/records'
import { amendRecord, toRecordDto } from '../../../services/records'

const Params = z.object({ id: z.coerce.number().int().positive() })

export default defineEventHandler(async (event) => {
  const actor = await requireUser(event)
  const { id } = await getValidatedRouterParams(event, parseWith(Params))
  const body = await readValidatedBody(event, parseWith(AmendmentBody))
  const record = await amendRecord(id, body, actor)
  setResponseStatus(event, 201)
  return { record: await toRecordDto(record, actor) }
})
