import { z } from 'zod'
import type { CaptionSavedDto } from '#shared/types/procedure-api'
import { captionAttachment } from '../../services/uploads/attachments'

const Params = z.object({ id: z.coerce.number().int().positive() })
const Body = z.object({ caption: z.string().trim().max(300) })

export default defineEventHandler(async (event) => {
  const actor = await requireUser(event)
  const { id } = await getValidatedRouterParams(event, parseWith(Params))
  const { caption } = await readValidatedBody(event, parseWith(Body))
  return await captionAttachment(id, caption, actor) satisfies CaptionSavedDto
})
