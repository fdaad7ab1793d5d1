import type { CapturedMailListDto } from '#shared/types/mail'
import { listCapturedMail } from '../../../services/mail/captured'

export default defineEventHandler(async (event) => {
  await requireRole(event, 'admin')
  const dir = useRuntimeConfig().mail.captureDir
  return { data: await listCapturedMail(dir), meta: { captureEnabled: Boolean(dir) } } satisfies CapturedMailListDto
})
