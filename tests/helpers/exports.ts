import type { Capture } from '../../shared/utils/waveform/synth'

// Invented instrument and logger exports of a synthetic capture, with the traits real ones have
// (metadata blocks, units in the header or their own row, decimal commas, index columns, date-time
// stamps, over-range cells, extra channels, UTF-16, CR line ends). No vendor's format is copied.

export interface ExportLayout {
  delimiter?: ',' | ';' | '\t'
  eol?: '\n' | '\r\n' | '\r'
  decimalComma?: boolean
  /** Quote every cell (numbers too). */
  quoteAll?: boolean
  /** Lines before the header, written as they are. */
  before?: string[]
  header?: string[] | null
  unitRow?: string[] | null
  /** The time cell of sample k; by default t × timeScale. */
  time?: (k: number, t: number) => string
  timeScale?: number
  voltageScale?: number
  currentScale?: number
  /** Write the current channel (when the capture has one). */
  withCurrent?: boolean
  /** Cells appended to each row (further channels). */
  extra?: (k: number) => string[]
  /** The cells of row k (time first) after they were written: change some to mark over range. */
  edit?: (k: number, cells: string[]) => string[]
  digits?: number
}

export function writeExport(capture: Capture, o: ExportLayout = {}): string {
  const d = o.delimiter ?? ','
  const eol = o.eol ?? '\n'
  const digits = o.digits ?? 9
  const number = (x: number): string => {
    const text = String(+x.toPrecision(digits))
    return o.decimalComma ? text.replace('.', ',') : text
  }
  const quote = (cell: string) => (o.quoteAll ? `"${cell}"` : cell)
  const lines = [...(o.before ?? [])]
  if (o.header) lines.push(o.header.map(quote).join(d))
  if (o.unitRow) lines.push(o.unitRow.map(quote).join(d))
  const { t, v, i } = capture
  for (let k = 0; k < t.length; k++) {
    let cells = [o.time ? o.time(k, t[k]!) : number(t[k]! * (o.timeScale ?? 1)), number(v[k]! * (o.voltageScale ?? 1))]
    if (o.withCurrent !== false && i !== undefined) cells.push(number(i[k]! * (o.currentScale ?? 1)))
    if (o.extra) cells.push(...o.extra(k))
    if (o.edit) cells = o.edit(k, cells)
    lines.push(cells.map(quote).join(d))
  }
  return lines.join(eol) + eol
}

export function utf16le(text: string, bom = true): Buffer {
  return Buffer.from(`${bom ? '\uFEFF' : ''}${text}`, 'utf16le')
}

export function utf16be(text: string, bom = true): Buffer {
  const le = utf16le(text, bom)
  for (let k = 0; k + 1 < le.length; k += 2) {
    const a = le[k]!
    le[k] = le[k + 1]!
    le[k + 1] = a
  }
  return le
}

/** An ISO 8601 stamp of t seconds after 2025-03-14 09:30:00 UTC, to the microsecond. */
export function isoStamp(t: number, separator = 'T'): string {
  const micros = Math.round(t * 1e6)
  const seconds = Math.floor(micros / 1e6)
  const fraction = String(micros - seconds * 1e6).padStart(6, '0')
  const date = new Date(Date.UTC(2025, 2, 14, 9, 30, 0) + seconds * 1000)
  return `${date.toISOString().slice(0, 19).replace('T', separator)}.${fraction}`
}

const TOKENS = ['∞', '-∞', 'OL', '', '"', '""', ';', ',', '\t', '\r', '\n', '\uFEFF', 'NaN', '1e400', '-0', '9.9E37', 'Time (s)', 'CH1 (V)', 'MATH (W)', 'Sample rate: 20 kHz', 'Sample', '2025-03-14T09:30:00.000001', 'µs', '0,5', '\u0000']

/**
 * Uploads of any kind: random bytes, random text, and a small real export broken in random
 * ways (cells replaced by over-range marks, quotes, separators; rows cut short, dropped or
 * repeated; the file truncated; re-encoded as UTF-16).
 */
export function arbitraryUpload(fc: typeof import('fast-check'), base: string): import('fast-check').Arbitrary<Buffer> {
  const lines = base.split('\n')
  const edit = fc.record({
    line: fc.nat({ max: lines.length - 1 }),
    kind: fc.constantFrom('replace', 'insert', 'drop', 'repeat', 'cut'),
    token: fc.oneof(fc.constantFrom(...TOKENS), fc.string({ maxLength: 12 })),
  })
  const broken = fc.record({
    edits: fc.array(edit, { maxLength: 8 }),
    truncate: fc.option(fc.nat({ max: base.length }), { nil: undefined }),
    encoding: fc.constantFrom('utf8', 'utf16le', 'utf16be'),
  }).map(({ edits, truncate, encoding }) => {
    const out = [...lines]
    for (const e of edits) {
      const at = Math.min(e.line, out.length - 1)
      if (at < 0) break
      if (e.kind === 'replace') out[at] = out[at]!.replace(/[^,]*$/, e.token)
      else if (e.kind === 'insert') out.splice(at, 0, e.token)
      else if (e.kind === 'drop') out.splice(at, 1)
      else if (e.kind === 'repeat') out.splice(at, 0, out[at]!)
      else out[at] = out[at]!.slice(0, Math.floor(out[at]!.length / 2))
    }
    const text = out.join('\n').slice(0, truncate)
    return encoding === 'utf8' ? Buffer.from(text, 'utf8') : encoding === 'utf16le' ? utf16le(text) : utf16be(text)
  })
  return fc.oneof(
    fc.uint8Array({ maxLength: 600 }).map(b => Buffer.from(b)),
    fc.string({ unit: 'binary', maxLength: 300 }).map(s => Buffer.from(s, 'utf8')),
    fc.array(fc.constantFrom(...TOKENS), { maxLength: 40 }).map(t => Buffer.from(t.join(''), 'utf8')),
    broken,
    broken,
  )
}
