import type { UploadedImageDto } from '#shared/types/procedure-api'
import { storeImage } from '../../services/uploads/images'

// Any signed-in role: authors place photos in steps, technicians attach bench photos to records.
// The body's size is bounded before this runs (middleware/01.security.ts, utils/request-body.ts).
export default defineEventHandler(async (event) => {
  const actor = await requireUser(event)
  const parts = await readMultipartFormData(event).catch((error: { statusCode?: number }) => {
    if (error.statusCode === 413 || error.statusCode === 415) throw error
    throw createError({ statusCode: 400, message: 'Send the photo as multipart/form-data with the field "file".', data: { fields: { file: 'missing' } } })
  })
  const file = parts?.find(p => p.name === 'file' && p.filename !== undefined)
  if (!file) throw createError({ statusCode: 400, message: 'Send the photo in the form field "file".', data: { fields: { file: 'missing' } } })
  const stored = await storeImage({ data: file.data, filename: file.filename }, actor, useObjectStore())
  setResponseStatus(event, 201)
  return { id: stored.id, url: stored.url, thumbnailUrl: stored.thumbnailUrl, width: stored.width, height: stored.height } satisfies UploadedImageDto
})
