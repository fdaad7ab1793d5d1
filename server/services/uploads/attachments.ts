import type { Readable } from 'node:stream'
import { roleAtLeast } from '../../../shared/types/roles'
import type { AttachmentDto } from '../../../shared/types/procedure-api'
import { Attachment, type User } from '../../db'
import { forbidden, notFound } from '../errors'
import type { ObjectStore } from '../storage'

// Stored files (photos, capture exports) as the API shows them: always through /api/files/[id],
// never by their object key or the uploader's file name.

export function toAttachmentDto(a: Attachment): AttachmentDto {
  return {
    id: a.id,
    url: `/api/files/${a.id}`,
    thumbnailUrl: `/api/files/${a.id}?size=thumb`,
    width: a.width ?? 0,
    height: a.height ?? 0,
    mime: a.mime,
    bytes: a.bytes,
    caption: a.caption,
  }
}

const EXT: Record<string, string> = { 'image/jpeg': 'jpg', 'image/png': 'png', 'image/webp': 'webp', 'text/csv': 'csv' }

/** A stored file opened for streaming, with the type and download name it is served under. */
export interface OpenedFile {
  body: Readable
  mime: string
  /** Our own name (`benchlore-<id>[-thumb].<ext>`), never the uploader's. */
  filename: string
  contentLength?: number
}

/** The file itself, or its thumbnail when asked for one and there is one. */
export async function openAttachment(id: number, size: 'full' | 'thumb', store: ObjectStore): Promise<OpenedFile> {
  const row = await Attachment.findByPk(id)
  if (!row) throw notFound('file')
  const thumb = size === 'thumb' && row.thumbnailKey
  const object = await store.get(thumb ? row.thumbnailKey! : row.objectKey)
  return {
    body: object.body,
    mime: thumb ? 'image/jpeg' : row.mime,
    filename: `benchlore-${row.id}${thumb ? '-thumb' : ''}.${thumb ? 'jpg' : EXT[row.mime] ?? 'bin'}`,
    contentLength: object.contentLength,
  }
}

/** Captions a photo: its uploader or an editor. */
export async function captionAttachment(id: number, caption: string, actor: User): Promise<{ id: number, caption: string }> {
  const attachment = await Attachment.findByPk(id)
  if (!attachment) throw notFound('file')
  if (attachment.uploadedById !== actor.id && !roleAtLeast(actor.role, 'editor')) throw forbidden('Only the person who uploaded a photo (or an editor) can caption it.')
  await attachment.update({ caption })
  return { id: attachment.id, caption: attachment.caption }
}
