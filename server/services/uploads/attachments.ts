import type { Readable } from 'node:stream'
import { roleAtLeast } from '../../../shared/types/roles'
import type { AttachmentDto } from '../../../shared/types/procedure-api'
import type { Attachment, User } from '../../db'
import { forbidden } from '../errors'
import type { ObjectStore } from '../storage'
import { findVisibleAttachment } from './visibility'

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

/** The file itself, or its thumbnail when asked for one and there is one, if this person may see it. */
export async function openAttachment(id: number, size: 'full' | 'thumb', user: User, store: ObjectStore): Promise<OpenedFile> {
  const row = await findVisibleAttachment(id, user)
  const thumb = size === 'thumb' && row.thumbnailKey
  const object = await store.get(thumb ? row.thumbnailKey! : row.objectKey)
  return {
    body: object.body,
    mime: thumb ? 'image/jpeg' : row.mime,
    filename: `benchlore-${row.id}${thumb ? '-thumb' : ''}.${thumb ? 'jpg' : EXT[row.mime] ?? 'bin'}`,
    contentLength: object.contentLength,
  }
}

/** Captions a photo: its uploader or an editor, of a photo they can see. */
export async function captionAttachment(id: number, caption: string, actor: User): Promise<{ id: number, caption: string }> {
  const attachment = await findVisibleAttachment(id, actor)
  if (attachment.uploadedById !== actor.id && !roleAtLeast(actor.role, 'editor')) throw forbidden('Only the person who uploaded a photo (or an editor) can caption it.')
  await attachment.update({ caption })
  return { id: attachment.id, caption: attachment.caption }
}
