import { listCapturedMail } from '../../../services/mail-capture'

export default defineEventHandler(async (event) => {
  await requireRole(event, 'admin')
  const dir = useRuntimeConfig().mail.captureDir
  return { data: await listCapturedMail(dir), meta: { captureEnabled: Boolean(dir) } }
})
