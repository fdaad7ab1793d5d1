import type { UploadedImageDto } from '#shared/types/procedure-api'
import { MAX_IMAGE_BYTES, storeImage } from '../../services/uploads/images'

// Any signed-in role: authors place photos in steps, technicians attach bench photos to records.
export default defineEventHandler(async (event) => {
  const actor = await requireUser(event)
  const declared = Number(getRequestHeader(event, 'content-length') ?? 0)
  if (declared > MAX_IMAGE_BYTES + 64 * 1024) {
    throw createError({ statusCode: 413, message: `The file is larger than ${MAX_IMAGE_BYTES / 1024 / 1024} MB.`, data: { fields: { file: 'too large' } } })
  }
  const parts = await readMultipartFormData(event).catch(() => {
    throw createError({ statusCode: 400, message: 'Send the photo as multipart/form-data with the field "file".', data: { fields: { file: 'missing' } } })
  })
  const file = parts?.find(p => p.name === 'file' && p.filename !== undefined)
  if (!file) throw createError({ statusCode: 400, message: 'Send the photo in the form field "file".', data: { fields: { file: 'missing' } } })
  const stored = await storeImage({ data: file.data, filename: file.filename }, actor, useObjectStore())
  setResponseStatus(event, 201)
  return { id: stored.id, url: stored.url, thumbnailUrl: stored.thumbnailUrl, width: stored.width, height: stored.height } satisfies UploadedImageDto
})
