/**
 * Records into typed arrays. Rows before the data (metadata, header, units) are kept aside; the
 * first data rows wait until the columns are planned from the header (and from which columns
 * carry values at all), then every data row is written straight into growing Float64Arrays.
 * Data rows with a time, voltage or current cell over range, empty or unreadable are left out
 * and counted, with where they were; more than the tolerated share of them refuses the file.
 */
import { planColumns, type ColumnPlan, type Layout } from './columns'
import { readMetadata } from './metadata'
import { CaptureFormatError, type CaptureMeta, type ColumnChoice, type CsvDelimiter, type ParsedCapture, type SkippedRows, type TextEncoding } from './types'
import { DateTimeReader, isBlank, isDateTime, isOverRange, OVER_RANGE_NUMBER, toBase } from './units'

const MAX_PROLOGUE_ROWS = 200
/** Data rows looked at before the columns are planned. */
const PLAN_ROWS = 32
const MAX_RANGES = 10

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

const plural = (n: number, word: string) => `${n} ${word}${n === 1 ? '' : 's'}`

/** "504 of 2096 data rows are left out: 504 with a cell over range (∞, OL) in "CH1", at rows 31–62, 131–162…" */
export function describeSkipped(s: SkippedRows, dataRows: number): string {
  const why: string[] = []
  if (s.overRange) why.push(`${s.overRange} with a cell over range (∞, OL or 9.9E37)`)
  if (s.empty) why.push(`${s.empty} with an empty cell`)
  if (s.unreadable) why.push(`${s.unreadable} with a cell that is not a number`)
  const where = s.ranges.map(([a, b]) => (a === b ? `${a}` : `${a}–${b}`)).join(', ')
  const more = s.count > s.ranges.reduce((n, [a, b]) => n + b - a + 1, 0) ? '…' : ''
  const columns = s.columns.length ? ` in ${s.columns.map(c => `"${c}"`).join(', ')}` : ''
  return `${s.count} of ${plural(dataRows, 'data row')} left out: ${why.join(', ')}${columns}, at row${s.count === 1 ? '' : 's'} ${where}${more}`
}

/** What to change in the export, for the main reason rows were left out. */
function skippedRemedy(s: SkippedRows): string {
  if (s.overRange >= s.empty && s.overRange >= s.unreadable) return 'the signal went past the instrument\'s range; set the vertical scale so the whole waveform fits on screen (more volts per division) and capture again'
  if (s.empty >= s.unreadable) return 'the instrument left cells empty, which it often does when the signal is over range; check the vertical scale, or export the channels again'
  return 'check the export\'s decimal sign and separator, and that the rows were not edited by hand'
}

export interface SinkOptions {
  delimiter: CsvDelimiter
  decimalComma: boolean
  encoding: TextEncoding
  maxSamples: number
  choice?: ColumnChoice
}

export class CaptureSink {
  private readonly opts: SinkOptions
  private readonly prologue: string[][] = []
  private pending: string[][] | null = null
  private plan: ColumnPlan | null = null
  private layout: Layout | null = null
  private rows = 0
  private dataRows = 0
  private readonly skipped: SkippedRows = { count: 0, overRange: 0, empty: 0, unreadable: 0, ranges: [], columns: [] }
  /** Rows of a single number were seen, with no sample interval to make a time axis of them. */
  private singleColumn = false
  private lastT = -Infinity
  private readonly t: GrowingArray
  private readonly v: GrowingArray
  private i: GrowingArray | null = null
  private dates: DateTimeReader | null = null
  /** Fields in the first data row. */
  dataFields = 0

  constructor(opts: SinkOptions) {
    this.opts = opts
    const capacity = Math.min(opts.maxSamples, 1 << 16)
    this.t = new GrowingArray(capacity)
    this.v = new GrowingArray(capacity)
  }

  /** Number() with the decimal comma handled; blank, non-finite, over range or unparseable gives NaN. */
  private num(field: string | undefined): number {
    if (field === undefined) return Number.NaN
    const x = this.opts.decimalComma ? Number(field.replace(',', '.')) : Number(field)
    if (x - x !== 0 || x >= OVER_RANGE_NUMBER || x <= -OVER_RANGE_NUMBER) return Number.NaN
    if (x === 0 && field.trim() === '') return Number.NaN
    return x
  }

  readonly isNumeric = (field: string | undefined): boolean => field !== undefined && field.trim() !== '' && !Number.isNaN(this.num(field))

  /** Whether the columns are planned (the data rows then go straight into the arrays). */
  get planned(): boolean {
    return this.layout !== null
  }

  record(fields: string[]): void {
    this.rows++
    if (this.layout !== null) {
      this.dataRow(fields, this.rows)
      return
    }
    if (this.pending === null) {
      if (!this.isDataRow(fields)) {
        if (this.prologue.length >= MAX_PROLOGUE_ROWS) throw this.noData(`in the first ${MAX_PROLOGUE_ROWS} rows`)
        this.prologue.push(fields)
        return
      }
      this.pending = []
      this.dataFields = fields.length
    }
    this.pending.push(fields)
    if (this.pending.length >= PLAN_ROWS) this.planAndReplay()
  }

  /**
   * A data row starts with a number (or a date-time stamp) and holds nothing but numbers,
   * over-range marks and empty cells. A lone number counts when the metadata says how far apart
   * the readings are.
   */
  private isDataRow(fields: string[]): boolean {
    if (!this.isNumeric(fields[0]) && !isDateTime(fields[0])) return false
    for (let c = 1; c < fields.length; c++) {
      const f = fields[c]
      if (!isBlank(f) && !this.isNumeric(f) && !isOverRange(f)) return false
    }
    if (fields.length >= 2) return true
    this.singleColumn = true
    return readMetadata(this.prologue, this.opts.decimalComma).interval !== undefined
  }

  private planAndReplay(): void {
    const rows = this.pending!
    this.plan = planColumns({
      prologue: this.prologue,
      rows,
      meta: readMetadata(this.prologue, this.opts.decimalComma),
      isNumeric: this.isNumeric,
      decimalComma: this.opts.decimalComma,
      ...(this.opts.choice ? { choice: this.opts.choice } : {}),
    })
    this.layout = this.plan.layout
    if (this.layout.currentCol !== null) this.i = new GrowingArray(this.t.data.length)
    if (this.layout.timeKind === 'date_time') this.dates = new DateTimeReader()
    this.pending = null
    const first = this.rows - rows.length + 1
    for (let k = 0; k < rows.length; k++) this.dataRow(rows[k]!, first + k)
  }

  private timeOf(fields: string[]): number {
    const L = this.layout!
    switch (L.timeKind) {
      case 'seconds': return toBase(this.num(fields[L.timeCol!]), L.timeScale)
      case 'index': return L.start + this.num(fields[L.timeCol!]) * L.interval
      case 'row': return L.start + (this.dataRows - 1) * L.interval
      case 'date_time': {
        const field = fields[L.timeCol!]
        return field === undefined ? Number.NaN : this.dates!.read(field)
      }
    }
  }

  private dataRow(fields: string[], row: number): void {
    const L = this.layout!
    this.dataRows++
    const time = this.timeOf(fields)
    const voltage = toBase(this.num(fields[L.voltageCol]), L.voltageScale)
    const current = L.currentCol !== null ? toBase(this.num(fields[L.currentCol]), L.currentScale) : 0
    if (time - time !== 0 || voltage - voltage !== 0 || current - current !== 0) {
      this.skip(fields, row)
      return
    }
    if (!(time > this.lastT)) {
      throw new CaptureFormatError(
        'TIME_NOT_INCREASING',
        `time does not increase at row ${row} (${time} s after ${this.lastT} s): export the time column with more digits, or check the file was not joined from several captures`,
        { row },
      )
    }
    if (this.t.length >= this.opts.maxSamples) {
      throw new CaptureFormatError('TOO_MANY_SAMPLES', `the capture has more than ${this.opts.maxSamples.toLocaleString('en')} samples: export a shorter record or decimate it on the instrument`, { row })
    }
    this.lastT = time
    this.t.push(time)
    this.v.push(voltage)
    this.i?.push(current)
  }

  /** Counts a row left out: the worst of its cells decides why, and its columns are named. */
  private skip(fields: string[], row: number): void {
    const L = this.layout!
    const plan = this.plan!
    const roles: Array<[number | null, string | null]> = [
      [L.timeKind === 'row' ? null : L.timeCol, plan.columns.time.name],
      [L.voltageCol, plan.columns.voltage.name],
      [L.currentCol, plan.columns.current?.name ?? null],
    ]
    let over = false
    let empty = false
    for (const [col, name] of roles) {
      if (col === null) continue
      const field = fields[col]
      if (field !== undefined && (this.isNumeric(field) || (col === L.timeCol && L.timeKind === 'date_time' && isDateTime(field)))) continue
      if (field !== undefined && isOverRange(field)) over = true
      else if (field !== undefined && isBlank(field)) empty = true
      const label = name ?? `column ${col + 1}`
      if (!this.skipped.columns.includes(label)) this.skipped.columns.push(label)
    }
    const s = this.skipped
    s.count++
    if (over) s.overRange++
    else if (empty) s.empty++
    else s.unreadable++
    const last = s.ranges[s.ranges.length - 1]
    if (last !== undefined && last[1] === row - 1) last[1] = row
    else if (s.ranges.length < MAX_RANGES) s.ranges.push([row, row])
  }

  private noData(where: string): CaptureFormatError {
    return new CaptureFormatError(
      'NO_NUMERIC_COLUMNS',
      this.singleColumn
        ? `only one numeric column ${where}; a capture needs time and voltage: export the time column too, or keep the header lines that state the sample interval or rate`
        : `no numeric columns ${where}: expected rows of time and voltage; export the waveform data as CSV, not a picture or the instrument settings`,
    )
  }

  finish(tolerance: number): ParsedCapture {
    if (this.layout === null) {
      if (this.pending !== null) this.planAndReplay()
      else if (this.rows === 0) throw new CaptureFormatError('EMPTY_FILE', 'the file is empty: export the capture again')
      else throw this.noData('in the file')
    }
    const samples = this.t.length
    const s = this.skipped
    if (s.count > tolerance * this.dataRows) {
      throw new CaptureFormatError(
        'TOO_MANY_BAD_ROWS',
        `${describeSkipped(s, this.dataRows)}; more than ${(100 * tolerance).toFixed(0)} % of the rows: ${skippedRemedy(s)}`,
        { row: s.ranges[0]?.[0] },
      )
    }
    const plan = this.plan!
    const meta: CaptureMeta = {
      encoding: this.opts.encoding,
      delimiter: this.opts.delimiter,
      decimalComma: this.opts.decimalComma,
      headerRows: this.prologue.length,
      columns: plan.columns,
      units: plan.units,
      dataRows: this.dataRows,
      droppedRows: s.count,
      skipped: s,
      samples,
      timeSource: plan.timeSource,
    }
    if (plan.sampleIntervalS !== undefined) meta.sampleIntervalS = plan.sampleIntervalS
    const result: ParsedCapture = { t: this.t.result(), v: this.v.result(), meta }
    if (this.i !== null) result.i = this.i.result()
    return result
  }
}
