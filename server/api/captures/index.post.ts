import { CaptureUploadFields, type CaptureUploadedDto } from '#shared/types/captures'
import { MAX_CAPTURE_BYTES, storeCapture } from '../../services/captures/store'

// The export arrives as multipart/form-data: the file, a label, and where it belongs in the job
// (recordId, stepKey) or which columns to read when the file leaves that open.
export default defineEventHandler(async (event) => {
  const actor = await requireUser(event)
  if (Number(getRequestHeader(event, 'content-length') ?? 0) > MAX_CAPTURE_BYTES + 64 * 1024) {
    throw createError({ statusCode: 413, message: 'The capture is larger than 50 MB.', data: { fields: { file: 'too large' } } })
  }
  const parts = await readMultipartFormData(event).catch((error: { statusCode?: number }) => {
    if (error.statusCode === 413 || error.statusCode === 415) throw error
    throw createError({ statusCode: 400, message: 'Send the capture as multipart/form-data with the field "file".', data: { fields: { file: 'missing' } } })
  })
  const file = parts?.find(p => p.name === 'file' && p.filename !== undefined)
  if (!file) throw createError({ statusCode: 400, message: 'Send the capture in the form field "file".', data: { fields: { file: 'missing' } } })
  const text = (name: string) => parts?.find(p => p.name === name && p.filename === undefined)?.data.toString('utf8') || undefined
  const fields = validateOr400(CaptureUploadFields, Object.fromEntries(['label', 'recordId', 'stepKey', 'voltageColumn', 'currentColumn'].map(k => [k, text(k)])))
  const capture = await storeCapture({ data: file.data }, fields, actor, useObjectStore())
  setResponseStatus(event, 201)
  const answer: CaptureUploadedDto = { id: capture.id, features: capture.features, file: capture.analysis.file!, warnings: capture.analysis.warnings }
  return answer
})
