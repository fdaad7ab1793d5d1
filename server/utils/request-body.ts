import type { IncomingMessage } from 'node:http'
import type { H3Event } from 'h3'
import { MAX_CAPTURE_BYTES } from '../services/captures/store'
import { MAX_IMAGE_BYTES } from '../services/uploads/images'

/** Room for the multipart boundaries and headers around an uploaded file. */
const MULTIPART_OVERHEAD = 64 * 1024

const megabytes = (bytes: number) => `${Math.round(bytes / 1024 / 1024)} MB`

/** Routes that take a file as multipart/form-data, with the most each may send. */
const MULTIPART_ROUTES: Record<string, BodyRule> = {
  '/api/uploads': { kind: 'multipart', limit: MAX_IMAGE_BYTES + MULTIPART_OVERHEAD, tooLarge: `The file is larger than ${megabytes(MAX_IMAGE_BYTES)}.`, field: 'file' },
  '/api/captures': { kind: 'multipart', limit: MAX_CAPTURE_BYTES + MULTIPART_OVERHEAD, tooLarge: `The capture is larger than ${megabytes(MAX_CAPTURE_BYTES)}.`, field: 'file' },
}

/**
 * JSON bodies. A whole revision (80 steps of Markdown with their causes and parts) is the largest
 * thing a person sends; everything else (a record's readings, a comment, a sign-in) is far smaller.
 */
export const JSON_BODY_LIMIT = 256 * 1024
export const REVISION_BODY_LIMIT = 4 * 1024 * 1024
const REVISION_ROUTES = [/^\/api\/revisions\/[^/]+$/, /^\/api\/procedures$/, /^\/api\/procedures\/[^/]+\/revisions$/]

export interface BodyRule {
  kind: 'json' | 'multipart'
  /** The most bytes of body the route reads. */
  limit: number
  /** What a 413 says, and the field it names. */
  tooLarge: string
  field: string
}

const size = (bytes: number) => (bytes >= 1024 * 1024 ? megabytes(bytes) : `${Math.round(bytes / 1024)} KB`)
const jsonRule = (limit: number): BodyRule => ({ kind: 'json', limit, tooLarge: `The request body is larger than this route accepts (${size(limit)}).`, field: 'body' })

/** What a route accepts as its body: the kind, and the most bytes it reads. */
export function bodyRule(path: string): BodyRule {
  const pathname = path.split('?')[0]!.replace(/\/+$/, '')
  return MULTIPART_ROUTES[pathname] ?? jsonRule(REVISION_ROUTES.some(r => r.test(pathname)) ? REVISION_BODY_LIMIT : JSON_BODY_LIMIT)
}

const bodyTooLarge = (rule: BodyRule) => createError({ statusCode: 413, message: rule.tooLarge, data: { fields: { [rule.field]: 'too large' } } })
const wrongType = (rule: BodyRule) => {
  const expected = rule.kind === 'multipart' ? 'multipart/form-data' : 'application/json'
  return createError({ statusCode: 415, message: `Send the request body as ${expected}.`, data: { fields: { body: `must be ${expected}` } } })
}

/**
 * Guards what any handler can read of the request body, so no route holds more than its limit:
 * - a declared length over the limit is refused at once, before a byte is read;
 * - a JSON body sent without a length (chunked) is read here, counted as it arrives, and refused
 *   once it passes the limit (what is left is discarded, never kept);
 * - a multipart body, whose limit is large, is read only when the handler asks for it, so a caller
 *   who is not signed in is told so before anything is read; it is counted the same way.
 * The body is handed over in the route's one content type only (JSON, or multipart on the upload
 * routes): an HTML form on another site can send neither. h3's body readers take the body from
 * `req[Symbol.for('h3RawBody')]` when it is set, so every reader goes through this one.
 */
export async function guardRequestBody(event: H3Event, rule: BodyRule): Promise<void> {
  const req = event.node.req
  const declared = req.headers['content-length']
  if (declared !== undefined) {
    if (Number(declared) > rule.limit) throw bodyTooLarge(rule)
    if (Number(declared) === 0) return
  }
  else if (!/\bchunked\b/i.test(String(req.headers['transfer-encoding'] ?? ''))) return
  let reading: Promise<Buffer> | undefined
  if (declared === undefined && rule.kind === 'json') {
    reading = readAtMost(req, rule)
    await reading
  }
  const type = String(req.headers['content-type'] ?? '').split(';')[0]!.trim().toLowerCase()
  const typeOk = type === (rule.kind === 'multipart' ? 'multipart/form-data' : 'application/json')
  Object.defineProperty(req, Symbol.for('h3RawBody'), {
    configurable: true,
    get: () => (typeOk ? (reading ??= readAtMost(req, rule)) : Promise.reject(wrongType(rule))),
  })
}

function readAtMost(req: IncomingMessage, rule: BodyRule): Promise<Buffer> {
  return new Promise((resolve, reject) => {
    const chunks: Buffer[] = []
    let size = 0
    let over = false
    req.on('data', (chunk: Buffer) => {
      if (over) return
      size += chunk.length
      if (size > rule.limit) {
        over = true
        chunks.length = 0
        reject(bodyTooLarge(rule))
        return
      }
      chunks.push(chunk)
    })
    req.on('end', () => resolve(Buffer.concat(chunks)))
    req.on('error', reject)
  })
}
