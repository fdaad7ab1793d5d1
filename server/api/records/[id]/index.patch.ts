import { z } from 'zod'
import { RecordPatchBody, type RecordReadDto } from '#shared/types/records'
import { toRecordDto } from '../../../services/records/dto'
import { patchRecord } from '../../../services/records/lifecycle'

const Params = z.object({ id: z.coerce.number().int().positive() })

export default defineEventHandler(async (event) => {
  const actor = await requireUser(event)
  const { id } = await getValidatedRouterParams(event, parseWith(Params))
  const body = await readValidatedBody(event, parseWith(RecordPatchBody))
  return { record: await toRecordDto(await patchRecord(id, body, actor), actor) } satisfies RecordReadDto
})
