/**
 * From bytes to text, and a first look at the text: the encoding (UTF-8, or UTF-16 in either
 * byte order, with or without a byte-order mark), the delimiter and the decimal sign.
 */
import { StringDecoder } from 'node:string_decoder'
import type { CsvDelimiter, TextEncoding } from './types'

export function toBuffer(chunk: Buffer | string | Uint8Array): Buffer {
  if (typeof chunk === 'string') return Buffer.from(chunk, 'utf8')
  return Buffer.isBuffer(chunk) ? chunk : Buffer.from(chunk.buffer, chunk.byteOffset, chunk.byteLength)
}

/** The encoding from a byte-order mark, or from the zero bytes UTF-16 puts beside ASCII text. */
export function detectEncoding(head: Buffer): { encoding: TextEncoding, bom: number } {
  if (head[0] === 0xEF && head[1] === 0xBB && head[2] === 0xBF) return { encoding: 'utf-8', bom: 3 }
  if (head[0] === 0xFF && head[1] === 0xFE) return { encoding: 'utf-16le', bom: 2 }
  if (head[0] === 0xFE && head[1] === 0xFF) return { encoding: 'utf-16be', bom: 2 }
  const pairs = Math.min(256, head.length >> 1)
  let evenZeros = 0
  let oddZeros = 0
  for (let k = 0; k < pairs; k++) {
    if (head[2 * k] === 0) evenZeros++
    if (head[2 * k + 1] === 0) oddZeros++
  }
  if (pairs >= 4 && oddZeros > 0.4 * pairs && evenZeros === 0) return { encoding: 'utf-16le', bom: 0 }
  if (pairs >= 4 && evenZeros > 0.4 * pairs && oddZeros === 0) return { encoding: 'utf-16be', bom: 0 }
  return { encoding: 'utf-8', bom: 0 }
}

/** Decodes chunk by chunk; characters split across chunks are held back until complete. */
export class TextDecoderStream {
  private readonly decoder: StringDecoder
  private readonly swap: boolean
  private carry: number | null = null

  constructor(encoding: TextEncoding) {
    this.decoder = new StringDecoder(encoding === 'utf-8' ? 'utf8' : 'utf16le')
    this.swap = encoding === 'utf-16be'
  }

  write(bytes: Buffer): string {
    return this.decoder.write(this.swap ? this.swapPairs(bytes) : bytes)
  }

  end(): string {
    return this.decoder.end()
  }

  /** Big-endian UTF-16 read as little-endian: each byte pair swapped, an odd byte carried over. */
  private swapPairs(bytes: Buffer): Buffer {
    const all = this.carry === null ? bytes : Buffer.concat([Buffer.from([this.carry]), bytes])
    const even = all.length & ~1
    this.carry = even < all.length ? all[even]! : null
    const out = Buffer.allocUnsafe(even)
    for (let k = 0; k < even; k += 2) {
      out[k] = all[k + 1]!
      out[k + 1] = all[k]!
    }
    return out
  }
}

/** Text that holds NUL characters or many undecodable bytes is some other kind of file. */
export function looksBinary(text: string): boolean {
  if (text.includes('\u0000')) return true
  let bad = 0
  for (let k = 0; k < text.length; k++) if (text.charCodeAt(k) === 0xFFFD) bad++
  return bad > 8 && bad > 0.01 * text.length
}

/** Splits a line at the delimiter, outside double quotes; the quotes are kept. */
function splitOutsideQuotes(line: string, delimiter: string): string[] {
  const fields: string[] = []
  let quoted = false
  let start = 0
  for (let k = 0; k < line.length; k++) {
    const c = line[k]
    if (c === '"') quoted = !quoted
    else if (c === delimiter && !quoted) {
      fields.push(line.slice(start, k))
      start = k + 1
    }
  }
  fields.push(line.slice(start))
  return fields
}

const COMMA_DECIMAL = /^\s*"?[-+]?\d+,\d+(?:[eE][-+]?\d+)?"?\s*$/
const POINT_DECIMAL = /^\s*"?[-+]?\d*\.\d+(?:[eE][-+]?\d+)?"?\s*$/

/**
 * Picks the delimiter from the lines that start with a number (counting only delimiters outside
 * quotes), and spots a decimal comma: in fields of ; or tab separated files, or inside quoted
 * fields of comma separated ones.
 */
export function sniffFormat(text: string): { delimiter: CsvDelimiter, decimalComma: boolean } {
  const all = text.split(/\r\n|\n|\r/)
  // The sample usually ends mid-line; that last piece would spoil the counts.
  if (all.length > 1 && !/[\r\n]$/.test(text)) all.pop()
  const lines = all.filter(l => l.trim() !== '')
  const numeric = lines.filter(l => /^\s*"?[-+]?(\d|\.\d)/.test(l))
  const sample = (numeric.length > 0 ? numeric : lines).slice(-50)
  const count = (line: string, d: string): number => splitOutsideQuotes(line, d).length - 1
  let delimiter: CsvDelimiter = ','
  let found = false
  // Tab and semicolon first: where they separate fields, commas are decimal signs.
  for (const d of ['\t', ';', ','] as const) {
    const counts = sample.map(l => count(l, d))
    const tally = new Map<number, number>()
    for (const c of counts) tally.set(c, (tally.get(c) ?? 0) + 1)
    let modal = 0
    let agreeing = 0
    for (const [c, times] of tally) {
      if (times > agreeing) {
        modal = c
        agreeing = times
      }
    }
    if (modal > 0 && agreeing >= 0.9 * counts.length) {
      delimiter = d
      found = true
      break
    }
  }
  if (!found) {
    let best = 0
    for (const d of ['\t', ';', ','] as const) {
      const total = sample.reduce((s, l) => s + count(l, d), 0)
      if (total > best) {
        best = total
        delimiter = d
      }
    }
  }
  // Decimal comma: numbers written with a comma and none with a point (date-time stamps aside).
  let commas = 0
  let points = 0
  for (const line of sample) {
    for (const field of splitOutsideQuotes(line, delimiter)) {
      if (delimiter === ',' && !field.includes('"')) continue
      if (COMMA_DECIMAL.test(field)) commas++
      else if (POINT_DECIMAL.test(field)) points++
    }
  }
  return { delimiter, decimalComma: commas > 0 && points === 0 }
}
