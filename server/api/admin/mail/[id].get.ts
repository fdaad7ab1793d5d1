import { z } from 'zod'
import type { CapturedMailReadDto } from '#shared/types/mail'
import { readCapturedMail } from '../../../services/mail/captured'

const Params = z.object({ id: z.string().regex(/^[\w.-]{1,120}$/, 'is not a message id') })

export default defineEventHandler(async (event) => {
  await requireRole(event, 'admin')
  const { id } = await getValidatedRouterParams(event, parseWith(Params))
  const message = await readCapturedMail(useRuntimeConfig().mail.captureDir, id)
  if (!message) throw createError({ statusCode: 404, message: 'No such message.' })
  return { message } satisfies CapturedMailReadDto
})
