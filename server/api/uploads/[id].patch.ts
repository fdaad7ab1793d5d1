import { roleAtLeast } from '#shared/types/roles'
import { z } from 'zod'
import { Attachment } from '../../db'

const Params = z.object({ id: z.coerce.number().int().positive() })
const Body = z.object({ caption: z.string().trim().max(300) })

export default defineEventHandler(async (event) => {
  const actor = await requireUser(event)
  const { id } = await getValidatedRouterParams(event, parseWith(Params))
  const { caption } = await readValidatedBody(event, parseWith(Body))
  const attachment = await Attachment.findByPk(id)
  if (!attachment) throw createError({ statusCode: 404, message: 'No such file.' })
  if (attachment.uploadedById !== actor.id && !roleAtLeast(actor.role, 'editor')) throw createError({ statusCode: 403, message: 'Only the person who uploaded a photo (or an editor) can caption it.' })
  await attachment.update({ caption })
  return { id: attachment.id, caption: attachment.caption }
})
