import { z } from 'zod'
import type { RecordReadDto } from '#shared/types/records'
import { toRecordDto } from '../../../services/records/dto'
import { chooseProcedure } from '../../../services/records/procedure-choice'

const Params = z.object({ id: z.coerce.number().int().positive() })
const Body = z.object({ procedure: z.string().trim().min(1).max(100) })

/** A record started from symptoms alone takes a live procedure; the record then walks its steps. */
export default defineEventHandler(async (event) => {
  const actor = await requireUser(event)
  const { id } = await getValidatedRouterParams(event, parseWith(Params))
  const body = await readValidatedBody(event, parseWith(Body))
  return { record: await toRecordDto(await chooseProcedure(id, body.procedure, actor), actor) } satisfies RecordReadDto
})
