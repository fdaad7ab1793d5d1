import { z } from 'zod'
import { RepairRecord } from '../../../db'
import { toRecordDto } from '../../../services/records'

const Params = z.object({ id: z.coerce.number().int().positive() })

export default defineEventHandler(async (event) => {
  const user = await requireUser(event)
  const { id } = await getValidatedRouterParams(event, parseWith(Params))
  const record = await RepairRecord.findByPk(id)
  if (!record) throw createError({ statusCode: 404, message: 'No such repair record.' })
  return { record: await toRecordDto(record, user) }
})
