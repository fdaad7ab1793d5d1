import { z } from 'zod'
import { ReferenceBody } from '#shared/types/captures'
import { addReference } from '../../../services/captures/store'

const Params = z.object({ id: z.coerce.number().int().positive() })

export default defineEventHandler(async (event) => {
  const actor = await requireRole(event, 'author')
  const { id } = await getValidatedRouterParams(event, parseWith(Params))
  const body = await readValidatedBody(event, parseWith(ReferenceBody))
  setResponseStatus(event, 201)
  return { reference: await addReference(id, body, actor) }
})
