import { createHash, randomUUID } from 'node:crypto'
import sharp from 'sharp'
import type { AttachmentDto } from '../../../shared/types/procedure-api'
import type { User } from '../../db'
import { Attachment } from '../../db'
import { invalid, tooLarge, unsupported } from '../errors'
import { ObjectStoreUnavailable, type ObjectStore } from '../storage'
import { toAttachmentDto } from './attachments'

export const MAX_IMAGE_BYTES = 15 * 1024 * 1024
/**
 * Photos with more pixels are refused before they are decoded: decoding costs about 4 bytes a
 * pixel, so 40 MP is some 160 MB held for the length of one upload (a bench photo needs far less).
 */
export const MAX_IMAGE_PIXELS = 40_000_000
/** Stored photos are at most this many pixels on their long side: plenty for a bench photo zoomed in. */
export const STORED_LONG_SIDE = 4096
export const THUMB_PX = 480

type ImageType = 'jpeg' | 'png' | 'webp'
const MIME: Record<ImageType, string> = { jpeg: 'image/jpeg', png: 'image/png', webp: 'image/webp' }

/** The type is decided by the file's first bytes, never by its name or declared type. */
export function sniffImage(buf: Buffer): ImageType | null {
  if (buf.length >= 3 && buf[0] === 0xFF && buf[1] === 0xD8 && buf[2] === 0xFF) return 'jpeg'
  if (buf.length >= 8 && buf.subarray(0, 8).equals(Buffer.from([0x89, 0x50, 0x4E, 0x47, 0x0D, 0x0A, 0x1A, 0x0A]))) return 'png'
  if (buf.length >= 12 && buf.toString('latin1', 0, 4) === 'RIFF' && buf.toString('latin1', 8, 12) === 'WEBP') return 'webp'
  return null
}

/**
 * Stores a bench photo: checks size, magic bytes and pixel count (from the header, before
 * decoding), decodes it fully with sharp (a polyglot or truncated file fails here), scales it to
 * at most STORED_LONG_SIDE on the long side and re-encodes it so EXIF and GPS are gone
 * (orientation applied first), makes a thumbnail from that, writes both objects, and only then
 * the row. A failed store leaves no row and no object.
 */
export async function storeImage(file: { data: Buffer, filename?: string }, actor: User, store: ObjectStore): Promise<AttachmentDto> {
  if (!file.data.length) throw invalid('The file is empty.', { file: 'is empty' })
  if (file.data.length > MAX_IMAGE_BYTES) throw tooLarge(`The file is larger than ${MAX_IMAGE_BYTES / 1024 / 1024} MB.`, { file: 'too large' })
  const type = sniffImage(file.data)
  if (!type) throw unsupported('Only JPEG, PNG and WebP photos can be uploaded (checked from the file\'s content).', { file: 'not a JPEG, PNG or WebP image' })
  const header = await sharp(file.data).metadata().catch(() => null)
  if (!header?.width || !header.height) throw invalid('The image could not be read: it is damaged or not really an image.', { file: 'unreadable image' })
  const pixels = header.width * header.height
  if (pixels > MAX_IMAGE_PIXELS) {
    throw tooLarge(
      `The photo has ${(pixels / 1e6).toFixed(1)} megapixels (${header.width} × ${header.height}); photos of up to ${MAX_IMAGE_PIXELS / 1e6} megapixels are accepted. Take it at a lower resolution or scale it down first.`,
      { file: `over ${MAX_IMAGE_PIXELS / 1e6} megapixels` },
    )
  }
  let full: { data: Buffer, info: { width: number, height: number } }
  let thumb: Buffer
  try {
    const scaled = sharp(file.data, { failOn: 'error', limitInputPixels: MAX_IMAGE_PIXELS })
      .rotate()
      .resize({ width: STORED_LONG_SIDE, height: STORED_LONG_SIDE, fit: 'inside', withoutEnlargement: true })
    const encoded = type === 'jpeg' ? scaled.jpeg({ quality: 86, mozjpeg: true }) : type === 'png' ? scaled.png() : scaled.webp({ quality: 86 })
    full = await encoded.toBuffer({ resolveWithObject: true })
    thumb = await sharp(full.data).resize({ width: THUMB_PX, height: THUMB_PX, fit: 'inside', withoutEnlargement: true }).jpeg({ quality: 80 }).toBuffer()
  }
  catch {
    throw invalid('The image could not be read: it is damaged or not really an image.', { file: 'unreadable image' })
  }
  const id = randomUUID()
  const objectKey = `images/${id}.${type === 'jpeg' ? 'jpg' : type}`
  const thumbnailKey = `images/${id}-thumb.jpg`
  try {
    await store.put(objectKey, full.data, MIME[type])
    await store.put(thumbnailKey, thumb, 'image/jpeg')
  }
  catch (error) {
    await store.delete(objectKey)
    throw error instanceof ObjectStoreUnavailable ? error : new ObjectStoreUnavailable(String(error))
  }
  try {
    const row = await Attachment.create({
      objectKey,
      thumbnailKey,
      kind: 'image',
      mime: MIME[type],
      bytes: full.data.length,
      width: full.info.width,
      height: full.info.height,
      sha256: createHash('sha256').update(full.data).digest('hex'),
      uploadedById: actor.id,
    })
    return toAttachmentDto(row)
  }
  catch (error) {
    await Promise.all([store.delete(objectKey), store.delete(thumbnailKey)])
    throw error
  }
}
