import { z } from 'zod'
import { openAttachment } from '../../services/uploads/attachments'

const Params = z.object({ id: z.coerce.number().int().positive() })
const Query = z.object({ size: z.enum(['full', 'thumb']).default('full') })

// Streams a file to those who may see what it belongs to (services/uploads/visibility.ts), under a
// name of our own, never the uploader's file name.
export default defineEventHandler(async (event) => {
  const user = await requireUser(event)
  const { id } = await getValidatedRouterParams(event, parseWith(Params))
  const { size } = await getValidatedQuery(event, parseWith(Query))
  const file = await openAttachment(id, size, user, useObjectStore())
  setResponseHeaders(event, {
    'Content-Type': file.mime,
    'Content-Disposition': `${file.mime.startsWith('image/') ? 'inline' : 'attachment'}; filename="${file.filename}"`,
    'Cache-Control': 'private, max-age=86400, immutable',
    'Content-Security-Policy': 'default-src \'none\'; img-src \'self\'; sandbox',
    ...(file.contentLength ? { 'Content-Length': String(file.contentLength) } : {}),
  })
  return sendStream(event, file.body as unknown as ReadableStream)
})
