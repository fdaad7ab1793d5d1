import { z } from 'zod'
import { ReferenceBody, type ReferenceDto } from '#shared/types/captures'
import { addReference } from '../../../services/captures/references'
import { findCapture } from '../../../services/captures/store'

const Params = z.object({ id: z.coerce.number().int().positive() })

export default defineEventHandler(async (event) => {
  const actor = await requireRole(event, 'author')
  const { id } = await getValidatedRouterParams(event, parseWith(Params))
  const body = await readValidatedBody(event, parseWith(ReferenceBody))
  const reference = await addReference(await findCapture(id), body, actor)
  setResponseStatus(event, 201)
  return { reference } satisfies { reference: ReferenceDto }
})
