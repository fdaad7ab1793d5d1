/**
 * Streaming parser for scope and logger exports (CSV: time, voltage, optional current).
 *
 * The bytes are parsed as they arrive and each record is written straight into growing
 * Float64Arrays; no array of row objects is ever built. The first 64 KB are looked at once
 * beforehand to pick the delimiter (tab, semicolon or comma, judged on the lines that start
 * with a number) and whether numbers use a decimal comma (only with ; or tab).
 *
 * Two CSV packages do the splitting. Instrument exports almost never quote a field: then the
 * prologue is split line by line and the data rows go through uDSV's incremental parser, about
 * eight times faster than csv-parse on a 1M-row export (npm run bench:captures). A file with a
 * quote anywhere in its first 64 KB goes through csv-parse, which handles quoting in full.
 *
 * Everything before the first numeric row is the prologue: instrument metadata ("Sample
 * interval,1e-05"), a header row naming the columns (units may sit inside: "time (ms)",
 * "U [V]", "t/us") and a unit row ("s,V,A", "ms,mV,mA"). Columns are picked by unit, then by
 * name, then by position (time, voltage, then a third numeric column as current). A sample-index
 * column (unit "Sequence", "Index"...) or a lone voltage column is turned into time when the
 * metadata gives the sample interval (and start).
 *
 * Rows after the prologue that do not parse are dropped and counted; more than 1 % of them is an
 * error. Errors are `CaptureFormatError` with a code the API maps to HTTP 422.
 */
import { once } from 'node:events'
import { StringDecoder } from 'node:string_decoder'
import { parse as csvParse } from 'csv-parse'
import { initParser } from 'udsv'

export type CaptureFormatErrorCode
  = | 'EMPTY_FILE'
    | 'NO_NUMERIC_COLUMNS'
    | 'TIME_NOT_INCREASING'
    | 'TOO_MANY_BAD_ROWS'
    | 'TOO_MANY_SAMPLES'
    | 'MALFORMED_CSV'

export class CaptureFormatError extends Error {
  readonly code: CaptureFormatErrorCode
  /** Row (1-based, blank lines not counted) the problem was found on, when there is one. */
  readonly row?: number
  constructor(code: CaptureFormatErrorCode, message: string, row?: number) {
    super(message)
    this.name = 'CaptureFormatError'
    this.code = code
    if (row !== undefined) this.row = row
  }
}

export type CsvDelimiter = ',' | ';' | '\t'
export type TimeUnit = 's' | 'ms' | 'us' | 'ns'
export type VoltageUnit = 'V' | 'mV' | 'kV' | 'uV'
export type CurrentUnit = 'A' | 'mA' | 'uA' | 'kA'

export interface CaptureColumn {
  /** 0-based column; null when time is generated from the sample interval. */
  index: number | null
  name: string | null
}

export interface CaptureMeta {
  delimiter: CsvDelimiter
  decimalComma: boolean
  /** Non-blank rows before the data (metadata, header and unit rows). */
  headerRows: number
  columns: { time: CaptureColumn, voltage: CaptureColumn, current?: CaptureColumn }
  units: { time: TimeUnit, voltage: VoltageUnit, current?: CurrentUnit }
  droppedRows: number
  samples: number
  /** How time was obtained: a time column, or sample index × interval from the metadata. */
  timeSource: 'column' | 'sample_interval'
  sampleIntervalS?: number
}

export interface ParsedCapture {
  t: Float64Array
  v: Float64Array
  i?: Float64Array
  meta: CaptureMeta
}

export interface ParseCaptureOptions {
  /** Refuse captures with more samples (default 2 000 000). */
  maxSamples?: number
  /** Share of data rows that may be dropped as unparseable (default 0.01). */
  badRowTolerance?: number
}

export const MAX_CAPTURE_SAMPLES = 2_000_000

const SNIFF_BYTES = 64 * 1024
const MAX_PROLOGUE_ROWS = 200

// ---------------------------------------------------------------------------------------------
// Units and names

type Quantity = 'time' | 'voltage' | 'current' | 'index'
interface UnitInfo { quantity: Quantity, scale: number, label: string }

/** Applies a unit's scale; sub-units divide by an exact power of ten so that "10 us" reads back as 1e-5, not 9.999999999999999e-6. */
function toBase(x: number, scale: number): number {
  return scale < 1 ? x / Math.round(1 / scale) : x * scale
}

const UNIT_TABLE: Record<string, UnitInfo> = {}
function defineUnits(quantity: Quantity, label: string, scale: number, spellings: string[]): void {
  for (const s of spellings) UNIT_TABLE[s] = { quantity, scale, label }
}
defineUnits('time', 's', 1, ['s', 'sec', 'secs', 'second', 'seconds'])
defineUnits('time', 'ms', 1e-3, ['ms', 'msec', 'msecs', 'millisecond', 'milliseconds'])
defineUnits('time', 'us', 1e-6, ['us', 'usec', 'usecs', 'microsecond', 'microseconds'])
defineUnits('time', 'ns', 1e-9, ['ns', 'nsec', 'nanosecond', 'nanoseconds'])
defineUnits('voltage', 'V', 1, ['v', 'volt', 'volts', 'vac', 'vdc'])
defineUnits('voltage', 'mV', 1e-3, ['mv', 'millivolt', 'millivolts'])
defineUnits('voltage', 'kV', 1e3, ['kv', 'kilovolt', 'kilovolts'])
defineUnits('voltage', 'uV', 1e-6, ['uv', 'microvolt', 'microvolts'])
defineUnits('current', 'A', 1, ['a', 'amp', 'amps', 'ampere', 'amperes'])
defineUnits('current', 'mA', 1e-3, ['ma', 'milliamp', 'milliamps', 'milliampere', 'milliamperes'])
defineUnits('current', 'uA', 1e-6, ['ua', 'microamp', 'microamps'])
defineUnits('current', 'kA', 1e3, ['ka', 'kiloamp', 'kiloamps'])
defineUnits('index', 'index', 1, ['sequence', 'seq', 'index', 'idx', 'sample', 'samples', 'point', 'points', 'pt', 'pts', 'no', 'no.', 'nr', 'nr.', '#', 'n'])

/** Reads a unit token such as "ms", "(mV)", "[µs]", "Volt"; the micro sign in any of its forms. */
function parseUnit(raw: string): UnitInfo | null {
  const token = raw
    .trim()
    .replace(/^[([{]\s*|\s*[)\]}]$/g, '')
    .replace(/^[µμ\uFFFD]/, 'u')
    .toLowerCase()
  return UNIT_TABLE[token] ?? null
}

/** Splits "time (s)", "U [mV]", "t/ms" into name and unit; the unit is null when none is given. */
function splitHeader(raw: string): { name: string, unit: UnitInfo | null } {
  const text = raw.trim()
  const bracket = /^(.*?)\s*[([]\s*([^)\]]+?)\s*[)\]]\s*$/.exec(text)
  if (bracket !== null) {
    const unit = parseUnit(bracket[2]!)
    if (unit !== null) return { name: bracket[1]!.trim(), unit }
  }
  const slash = /^(.+?)\s*\/\s*([^/\s]+)$/.exec(text)
  if (slash !== null) {
    const unit = parseUnit(slash[2]!)
    if (unit !== null) return { name: slash[1]!.trim(), unit }
  }
  return { name: text, unit: null }
}

const TIME_NAME = /^(time|t|x|zeit|temps|tiempo|tempo|tid|czas)$|time/i
const INDEX_NAME = /^(index|idx|sample|samples|sample ?no\.?|no\.?|nr\.?|n|#|point|pt|sequence|seq)$/i
const VOLTAGE_NAME = /volt|spannung|tension|^(u|v|vin|vout|vload|uload|ul|vl|ch ?1|channel ?1|c1|ch1)$/i
const CURRENT_NAME = /curr|amp|strom|courant|corriente|^(i|il|iload|iin)$/i

const INTERVAL_KEY = /(sampl(e|ing)\s*(interval|period|time))|x\s*increment|^increment$|^xinc|time\s*(step|per\s*(point|sample))|^dt$|^(horizontal\s*)?interval$/i
const RATE_KEY = /(sampl(e|ing)\s*rate)|^rate$|^sa\/s$/i
const START_KEY = /^(start|x\s*start|x\s*origin|xorigin|start\s*time|t0|first\s*(point|sample)\s*time)$/i
const TIME_UNIT_KEY = /(horizontal|x|time)\s*units?/i
const VOLTAGE_UNIT_KEY = /(vertical|y|voltage)\s*units?/i

/** "1e-05", "10us", "10 µs", "100 kS/s", "1 MSa/s", "50 kHz": value with its scale applied. */
function parseQuantity(raw: string, decimalComma: boolean): { value: number, kind: 'time' | 'rate' | 'plain' } | null {
  const text = (decimalComma ? raw.replace(',', '.') : raw).trim()
  const m = /^([-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?)\s*(.*)$/.exec(text)
  if (m === null) return null
  const value = Number(m[1])
  const suffix = m[2]!.trim()
  if (suffix === '') return { value, kind: 'plain' }
  const unit = parseUnit(suffix)
  if (unit !== null && unit.quantity === 'time') return { value: toBase(value, unit.scale), kind: 'time' }
  const rate = /^([kmg]?)(s\/s|sa\/s|sps|hz)$/i.exec(suffix)
  if (rate !== null) {
    const prefix = rate[1]!.toLowerCase()
    return { value: value * (prefix === 'k' ? 1e3 : prefix === 'm' ? 1e6 : prefix === 'g' ? 1e9 : 1), kind: 'rate' }
  }
  return null
}

function isBlank(field: string | undefined): boolean {
  return field === undefined || field.trim() === ''
}

// ---------------------------------------------------------------------------------------------
// Format sniffing

/** Picks the delimiter from the lines that start with a number, and spots a decimal comma. */
export function sniffFormat(text: string): { delimiter: CsvDelimiter, decimalComma: boolean } {
  const all = text.split(/\r\n|\n|\r/)
  // The sample usually ends mid-line; that last piece would spoil the counts.
  if (all.length > 1 && !/[\r\n]$/.test(text)) all.pop()
  const lines = all.filter(l => l.trim() !== '')
  const numeric = lines.filter(l => /^\s*"?[-+]?(\d|\.\d)/.test(l))
  const sample = (numeric.length > 0 ? numeric : lines).slice(-50)
  const count = (line: string, d: string): number => line.split(d).length - 1
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
  const decimalComma = delimiter !== ',' && sample.some(l => /\d,\d/.test(l)) && !sample.some(l => /\d\.\d/.test(l))
  return { delimiter, decimalComma }
}

// ---------------------------------------------------------------------------------------------
// Records into typed arrays

class GrowingArray {
  data: Float64Array
  length = 0
  constructor(capacity: number) {
    this.data = new Float64Array(capacity)
  }

  push(x: number): void {
    if (this.length === this.data.length) {
      const next = new Float64Array(this.data.length * 2)
      next.set(this.data)
      this.data = next
    }
    this.data[this.length++] = x
  }

  result(): Float64Array {
    return this.data.slice(0, this.length)
  }
}

interface Layout {
  timeCol: number | null
  /** Time = start + value × interval (index column) or start + row × interval (no time column). */
  timeFromIndex: boolean
  timeScale: number
  start: number
  interval: number
  voltageCol: number
  voltageScale: number
  currentCol: number | null
  currentScale: number
}

class CaptureSink {
  private readonly delimiter: CsvDelimiter
  private readonly decimalComma: boolean
  private readonly maxSamples: number
  private readonly prologue: string[][] = []
  private layout: Layout | null = null
  private rows = 0
  private dropped = 0
  /** Rows of a single number were seen, with no sample interval to make a time axis of them. */
  private singleColumn = false
  private lastT = -Infinity
  private readonly t: GrowingArray
  private readonly v: GrowingArray
  private i: GrowingArray | null = null
  meta: Omit<CaptureMeta, 'droppedRows' | 'samples'> | null = null

  constructor(delimiter: CsvDelimiter, decimalComma: boolean, maxSamples: number) {
    this.delimiter = delimiter
    this.decimalComma = decimalComma
    this.maxSamples = maxSamples
    const capacity = Math.min(maxSamples, 1 << 16)
    this.t = new GrowingArray(capacity)
    this.v = new GrowingArray(capacity)
  }

  /** Number() with the decimal comma handled; blank, non-finite or unparseable gives NaN. */
  private num(field: string | undefined): number {
    if (field === undefined) return Number.NaN
    const x = this.decimalComma ? Number(field.replace(',', '.')) : Number(field)
    if (x - x !== 0) return Number.NaN
    if (x === 0 && field.trim() === '') return Number.NaN
    return x
  }

  private isNumeric(field: string | undefined): boolean {
    return field !== undefined && field.trim() !== '' && !Number.isNaN(this.num(field))
  }

  /** Whether the first data row has been seen (the columns are then planned). */
  get planned(): boolean {
    return this.layout !== null
  }

  /** Fields in the first data row, once planned. */
  dataFields = 0

  record(fields: string[]): void {
    this.rows++
    if (this.layout === null) {
      if (!this.isDataRow(fields)) {
        if (this.prologue.length >= MAX_PROLOGUE_ROWS) throw this.noData(`in the first ${MAX_PROLOGUE_ROWS} rows`)
        this.prologue.push(fields)
        return
      }
      this.layout = this.planColumns(fields)
      this.dataFields = fields.length
    }
    this.dataRow(fields)
  }

  private isDataRow(fields: string[]): boolean {
    if (!this.isNumeric(fields[0])) return false
    let numeric = 0
    for (const f of fields) if (this.isNumeric(f)) numeric++
    if (numeric >= 2) return true
    this.singleColumn = true
    // A lone column of readings counts when the metadata says how far apart they are.
    return fields.slice(1).every(isBlank) && this.metadata().interval !== undefined
  }

  private metadata(): { interval?: number, start?: number, timeUnit?: UnitInfo, voltageUnit?: UnitInfo } {
    const found: { interval?: number, start?: number, timeUnit?: UnitInfo, voltageUnit?: UnitInfo } = {}
    const take = (key: string, raw: string | undefined): void => {
      if (raw === undefined) return
      const k = key.trim()
      if (TIME_UNIT_KEY.test(k)) {
        const u = parseUnit(raw)
        if (u?.quantity === 'time') found.timeUnit = u
        return
      }
      if (VOLTAGE_UNIT_KEY.test(k)) {
        const u = parseUnit(raw)
        if (u?.quantity === 'voltage') found.voltageUnit = u
        return
      }
      const q = parseQuantity(raw, this.decimalComma)
      if (q === null) return
      if (INTERVAL_KEY.test(k) && q.kind !== 'rate' && q.value > 0) found.interval = q.value
      else if (RATE_KEY.test(k) && q.value > 0) found.interval = 1 / q.value
      else if (START_KEY.test(k) && q.kind !== 'rate') found.start = q.value
    }
    for (let r = 0; r < this.prologue.length; r++) {
      const row = this.prologue[r]!
      // "key,value" lines; the first non-blank field after the key is the value.
      if (!this.isNumeric(row[0]) && row[0] !== undefined) take(row[0], row.slice(1).find(f => !isBlank(f)))
      // A header row whose names sit above values in the next row ("X,CH1,Start,Increment" over
      // "Sequence,Volt,-0.01,1e-05").
      const next = this.prologue[r + 1]
      if (next !== undefined) {
        for (let c = 0; c < row.length; c++) {
          if (!isBlank(row[c]) && !this.isNumeric(row[c]) && this.isNumeric(next[c])) take(row[c]!, next[c])
        }
      }
    }
    return found
  }

  private planColumns(first: string[]): Layout {
    const rows = this.prologue
    const isUnitRow = (row: string[]): boolean => {
      let units = 0
      for (const f of row) {
        if (isBlank(f)) continue
        if (parseUnit(f) !== null) units++
        else if (!this.isNumeric(f)) return false
      }
      return units > 0
    }
    const isHeaderRow = (row: string[]): boolean => {
      const named = row.filter(f => !isBlank(f))
      return named.length >= Math.min(2, first.length) && named.every(f => !this.isNumeric(f))
    }
    let unitRow: string[] | null = null
    let headerRow: string[] | null = null
    let r = rows.length - 1
    if (r >= 0 && isUnitRow(rows[r]!)) unitRow = rows[r--]!
    if (r >= 0 && isHeaderRow(rows[r]!)) headerRow = rows[r]!
    const meta = this.metadata()

    const columnCount = first.length
    const names: Array<string | null> = []
    const units: Array<UnitInfo | null> = []
    for (let c = 0; c < columnCount; c++) {
      const header = headerRow?.[c]
      const split = header !== undefined && !isBlank(header) ? splitHeader(header) : null
      names.push(split?.name ?? null)
      const fromRow = unitRow?.[c] !== undefined ? parseUnit(unitRow[c]!) : null
      units.push(fromRow ?? split?.unit ?? null)
    }
    const numericCols: number[] = []
    for (let c = 0; c < columnCount; c++) if (this.isNumeric(first[c])) numericCols.push(c)
    const taken = new Set<number>()
    const pick = (test: (c: number) => boolean): number | null => {
      for (const c of numericCols) {
        if (!taken.has(c) && test(c)) {
          taken.add(c)
          return c
        }
      }
      return null
    }
    const unitIs = (c: number, q: Quantity): boolean => units[c]?.quantity === q
    const nameIs = (c: number, re: RegExp): boolean => names[c] !== null && re.test(names[c]!)

    let timeCol = pick(c => unitIs(c, 'time') || unitIs(c, 'index'))
    if (timeCol === null) timeCol = pick(c => units[c] === null && (nameIs(c, INDEX_NAME) || nameIs(c, TIME_NAME)))
    const loneColumn = numericCols.length === 1 && meta.interval !== undefined
    if (timeCol === null && !loneColumn) timeCol = pick(() => true)
    let voltageCol = pick(c => unitIs(c, 'voltage'))
    if (voltageCol === null) voltageCol = pick(c => units[c] === null && nameIs(c, VOLTAGE_NAME))
    if (voltageCol === null) voltageCol = pick(c => !unitIs(c, 'current') && !unitIs(c, 'time'))
    if (voltageCol === null) {
      throw new CaptureFormatError(
        'NO_NUMERIC_COLUMNS',
        `found ${numericCols.length} numeric column${numericCols.length === 1 ? '' : 's'}; a capture needs time and voltage (or a sample interval in the header)`,
      )
    }
    let currentCol = pick(c => unitIs(c, 'current'))
    if (currentCol === null) currentCol = pick(c => units[c] === null && nameIs(c, CURRENT_NAME))
    if (currentCol === null) currentCol = pick(c => units[c] === null || unitIs(c, 'current'))

    const timeUnit = timeCol !== null ? units[timeCol] : null
    const timeFromIndex
      = timeCol === null || (meta.interval !== undefined && (timeUnit?.quantity === 'index' || (timeUnit === null && nameIs(timeCol, INDEX_NAME))))
    if (timeFromIndex && meta.interval === undefined) {
      throw new CaptureFormatError('NO_NUMERIC_COLUMNS', 'the first column counts samples but the file gives no sample interval to turn it into time')
    }
    const timeInfo = !timeFromIndex && timeUnit?.quantity === 'time' ? timeUnit : !timeFromIndex ? meta.timeUnit ?? null : null
    const voltageInfo = units[voltageCol] ?? meta.voltageUnit ?? null
    const currentInfo = currentCol !== null ? units[currentCol] ?? null : null

    const meta0: Omit<CaptureMeta, 'droppedRows' | 'samples'> = {
      delimiter: this.delimiter,
      decimalComma: this.decimalComma,
      headerRows: rows.length,
      columns: {
        time: { index: timeCol, name: timeCol !== null ? names[timeCol] ?? null : null },
        voltage: { index: voltageCol, name: names[voltageCol] ?? null },
      },
      units: {
        time: (timeInfo?.label ?? 's') as TimeUnit,
        voltage: (voltageInfo?.label ?? 'V') as VoltageUnit,
      },
      timeSource: timeFromIndex ? 'sample_interval' : 'column',
    }
    if (meta.interval !== undefined) meta0.sampleIntervalS = meta.interval
    if (currentCol !== null) {
      meta0.columns.current = { index: currentCol, name: names[currentCol] ?? null }
      meta0.units.current = (currentInfo?.label ?? 'A') as CurrentUnit
      this.i = new GrowingArray(this.t.data.length)
    }
    this.meta = meta0
    return {
      timeCol,
      timeFromIndex,
      timeScale: timeInfo?.scale ?? 1,
      start: meta.start ?? 0,
      interval: meta.interval ?? 0,
      voltageCol,
      voltageScale: voltageInfo?.scale ?? 1,
      currentCol,
      currentScale: currentInfo?.scale ?? 1,
    }
  }

  private dataRow(fields: string[]): void {
    const L = this.layout!
    const count = this.t.length
    let time: number
    if (L.timeCol === null) time = L.start + count * L.interval
    else {
      const raw = this.num(fields[L.timeCol])
      time = L.timeFromIndex ? L.start + raw * L.interval : toBase(raw, L.timeScale)
    }
    const voltage = toBase(this.num(fields[L.voltageCol]), L.voltageScale)
    const current = L.currentCol !== null ? toBase(this.num(fields[L.currentCol]), L.currentScale) : 0
    if (time - time !== 0 || voltage - voltage !== 0 || current - current !== 0) {
      this.dropped++
      return
    }
    if (!(time > this.lastT)) {
      throw new CaptureFormatError(
        'TIME_NOT_INCREASING',
        `time does not increase at row ${this.rows} (${time} s after ${this.lastT} s); export the time column with more digits, or check the file was not joined from several captures`,
        this.rows,
      )
    }
    if (count >= this.maxSamples) {
      throw new CaptureFormatError('TOO_MANY_SAMPLES', `the capture has more than ${this.maxSamples.toLocaleString('en')} samples; export a shorter record or decimate it on the instrument`, this.rows)
    }
    this.lastT = time
    this.t.push(time)
    this.v.push(voltage)
    this.i?.push(current)
  }

  private noData(where: string): CaptureFormatError {
    return new CaptureFormatError(
      'NO_NUMERIC_COLUMNS',
      this.singleColumn
        ? `only one numeric column ${where}; a capture needs time and voltage, or a sample interval in the header`
        : `no numeric columns ${where}: expected rows of time and voltage`,
    )
  }

  finish(tolerance: number): ParsedCapture {
    if (this.layout === null || this.meta === null) {
      if (this.rows === 0) throw new CaptureFormatError('EMPTY_FILE', 'the file is empty')
      throw this.noData('in the file')
    }
    const samples = this.t.length
    const dataRows = samples + this.dropped
    if (this.dropped > tolerance * dataRows) {
      throw new CaptureFormatError(
        'TOO_MANY_BAD_ROWS',
        `${this.dropped} of ${dataRows} data rows could not be read (more than ${(100 * tolerance).toFixed(0)} %)`,
      )
    }
    const meta: CaptureMeta = { ...this.meta, droppedRows: this.dropped, samples }
    const result: ParsedCapture = { t: this.t.result(), v: this.v.result(), meta }
    if (this.i !== null) result.i = this.i.result()
    return result
  }
}

// ---------------------------------------------------------------------------------------------

function toBuffer(chunk: Buffer | string | Uint8Array): Buffer {
  if (typeof chunk === 'string') return Buffer.from(chunk, 'utf8')
  return Buffer.isBuffer(chunk) ? chunk : Buffer.from(chunk.buffer, chunk.byteOffset, chunk.byteLength)
}

function decodeHead(head: Buffer): string {
  if (head[0] === 0xff && head[1] === 0xfe) return head.subarray(2).toString('utf16le')
  const text = head.toString('utf8')
  return text.charCodeAt(0) === 0xfeff ? text.slice(1) : text
}

export async function parseCaptureCsv(
  source: AsyncIterable<Buffer | string> | NodeJS.ReadableStream,
  options: ParseCaptureOptions = {},
): Promise<ParsedCapture> {
  const maxSamples = options.maxSamples ?? MAX_CAPTURE_SAMPLES
  const tolerance = options.badRowTolerance ?? 0.01
  const iterator = (source as AsyncIterable<Buffer | string | Uint8Array>)[Symbol.asyncIterator]()

  // Enough of the start to judge the format; it is then fed to the parser like the rest.
  const head: Buffer[] = []
  let headBytes = 0
  let exhausted = false
  while (headBytes < SNIFF_BYTES) {
    const next = await iterator.next()
    if (next.done) {
      exhausted = true
      break
    }
    const chunk = toBuffer(next.value)
    head.push(chunk)
    headBytes += chunk.length
  }
  const headText = decodeHead(Buffer.concat(head))
  if (exhausted && headText.trim() === '') throw new CaptureFormatError('EMPTY_FILE', 'the file is empty')
  const { delimiter, decimalComma } = sniffFormat(headText.slice(0, SNIFF_BYTES))

  const sink = new CaptureSink(delimiter, decimalComma, maxSamples)
  if (!headText.includes('"')) return await parseUnquoted(Buffer.concat(head), exhausted, iterator, sink, delimiter, tolerance)
  // Quotes are rare in instrument exports; relaxing them keeps a stray one from failing a file.
  const parser = csvParse({ delimiter, bom: true, relax_column_count: true, relax_quotes: true, skip_empty_lines: true })
  let failure: unknown = null
  parser.on('readable', () => {
    try {
      let record: string[] | null
      while ((record = parser.read() as string[] | null) !== null) sink.record(record)
    }
    catch (error) {
      failure = error
      parser.destroy()
    }
  })
  const finished = new Promise<void>((resolve, reject) => {
    parser.on('end', resolve)
    parser.on('error', reject)
    parser.on('close', resolve)
  })
  // Rejections are collected below; this keeps an early one from counting as unhandled.
  finished.catch(() => undefined)

  const write = async (chunk: Buffer): Promise<void> => {
    if (!parser.write(chunk)) await Promise.race([once(parser, 'drain'), finished])
  }
  try {
    for (const chunk of head) {
      if (failure !== null || parser.destroyed) break
      await write(chunk)
    }
    while (!exhausted && failure === null && !parser.destroyed) {
      const next = await iterator.next()
      if (next.done) break
      await write(toBuffer(next.value))
    }
    if (failure === null && !parser.destroyed) parser.end()
    await finished
  }
  catch (error) {
    if (failure === null) failure = error
  }
  finally {
    if (failure !== null) await iterator.return?.()
  }
  if (failure !== null) {
    if (failure instanceof CaptureFormatError) throw failure
    const code = (failure as { code?: unknown }).code
    if (typeof code === 'string' && code.startsWith('CSV_')) {
      throw new CaptureFormatError('MALFORMED_CSV', `the file is not valid CSV: ${(failure as Error).message}`)
    }
    throw failure
  }
  return sink.finish(tolerance)
}

/**
 * The common case: no quotes. The prologue is split line by line until the first data row; the
 * rest goes through uDSV with the column count of that row. Rows end at "\n" (a "\r" before it
 * is whitespace to Number()), or at "\r" in files that have no "\n" at all.
 */
async function parseUnquoted(
  headBytes: Buffer,
  exhausted: boolean,
  iterator: AsyncIterator<Buffer | string | Uint8Array>,
  sink: CaptureSink,
  delimiter: CsvDelimiter,
  tolerance: number,
): Promise<ParsedCapture> {
  const utf16 = headBytes[0] === 0xff && headBytes[1] === 0xfe
  const decoder = new StringDecoder(utf16 ? 'utf16le' : 'utf8')
  let text = decoder.write(utf16 ? headBytes.subarray(2) : headBytes)
  if (text.charCodeAt(0) === 0xfeff) text = text.slice(1)
  const rowEnd = !text.includes('\n') && text.includes('\r') ? '\r' : '\n'
  let done = exhausted
  const more = async (): Promise<string | null> => {
    if (done) return null
    const next = await iterator.next()
    if (next.done) {
      done = true
      return decoder.end() || null
    }
    return decoder.write(toBuffer(next.value))
  }

  try {
    // Prologue: metadata, header and unit rows, up to and including the first data row.
    let pos = 0
    while (!sink.planned) {
      let end = text.indexOf(rowEnd, pos)
      if (end < 0) {
        const chunk = await more()
        if (chunk !== null) {
          text = text.slice(pos) + chunk
          pos = 0
          continue
        }
        if (pos >= text.length) break
        end = text.length
      }
      const line = text.slice(pos, end)
      pos = end + 1
      if (line.trim() !== '') sink.record(line.replace(/\r$/, '').split(delimiter))
    }
    if (!sink.planned) return sink.finish(tolerance)

    // Data rows. A row with fewer fields than the first one runs on into the next line (uDSV
    // reads a fixed number of columns); such a row is split again here, so no row is lost.
    const cols = Array.from({ length: sink.dataFields }, (_, k) => ({ name: `c${k}`, type: 's' as const, repl: { empty: '', null: undefined, NaN: undefined } }))
    const parser = initParser({ col: delimiter, row: rowEnd, encl: '', esc: '', trim: false, cols })
    const onRow = (row: string[]): void => {
      for (let k = 0; k < row.length; k++) {
        if (row[k]!.includes(rowEnd)) {
          for (const line of row.join(delimiter).split(rowEnd)) if (line.trim() !== '') sink.record(line.split(delimiter))
          return
        }
      }
      if (row.length > 1 || row[0]!.trim() !== '') sink.record(row)
    }
    let chunk: string | null = text.slice(pos)
    while (chunk !== null) {
      if (chunk !== '') parser.chunk<string[]>(chunk, parser.stringArrs, onRow)
      chunk = await more()
    }
    parser.end()
  }
  catch (error) {
    await iterator.return?.()
    throw error
  }
  return sink.finish(tolerance)
}
