import { z } from 'zod'
import type { RecordReadDto } from '#shared/types/records'
import { readRecord } from '../../../services/records/dto'

const Params = z.object({ id: z.coerce.number().int().positive() })

export default defineEventHandler(async (event) => {
  const user = await requireUser(event)
  const { id } = await getValidatedRouterParams(event, parseWith(Params))
  return { record: await readRecord(id, user) } satisfies RecordReadDto
})
