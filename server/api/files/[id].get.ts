import { z } from 'zod'
import { Attachment } from '../../db'

const Params = z.object({ id: z.coerce.number().int().positive() })
const Query = z.object({ size: z.enum(['full', 'thumb']).default('full') })
const EXT: Record<string, string> = { 'image/jpeg': 'jpg', 'image/png': 'png', 'image/webp': 'webp', 'text/csv': 'csv' }

// Streams an object to signed-in users under a name of our own, never the uploader's file name.
export default defineEventHandler(async (event) => {
  await requireUser(event)
  const { id } = await getValidatedRouterParams(event, parseWith(Params))
  const { size } = await getValidatedQuery(event, parseWith(Query))
  const row = await Attachment.findByPk(id)
  if (!row) throw createError({ statusCode: 404, message: 'No such file.' })
  const thumb = size === 'thumb' && row.thumbnailKey
  const object = await useObjectStore().get(thumb ? row.thumbnailKey! : row.objectKey)
  const mime = thumb ? 'image/jpeg' : row.mime
  const inline = mime.startsWith('image/')
  setResponseHeaders(event, {
    'Content-Type': mime,
    'Content-Disposition': `${inline ? 'inline' : 'attachment'}; filename="benchlore-${row.id}${thumb ? '-thumb' : ''}.${thumb ? 'jpg' : EXT[row.mime] ?? 'bin'}"`,
    'Cache-Control': 'private, max-age=86400, immutable',
    'Content-Security-Policy': 'default-src \'none\'; img-src \'self\'; sandbox',
    ...(object.contentLength ? { 'Content-Length': String(object.contentLength) } : {}),
  })
  return sendStream(event, object.body as unknown as ReadableStream)
})
