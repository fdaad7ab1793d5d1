/** What the capture parser gives back, and how it refuses a file. */

export type CaptureFormatErrorCode
  = | 'EMPTY_FILE'
    | 'NOT_TEXT'
    | 'NO_NUMERIC_COLUMNS'
    | 'NO_TIME_AXIS'
    | 'AMBIGUOUS_COLUMNS'
    | 'BAD_COLUMN_CHOICE'
    | 'TIME_NOT_INCREASING'
    | 'TOO_MANY_BAD_ROWS'
    | 'TOO_MANY_SAMPLES'
    | 'MALFORMED_CSV'

/** What a column holds, as its header and units say. */
export type ColumnQuantity = 'time' | 'index' | 'voltage' | 'current' | 'other' | 'unknown'

/** A column of the file as the technician would recognise it, for choosing among them. */
export interface ColumnInfo {
  /** 0-based position in the row. */
  index: number
  name: string | null
  /** The unit as the file writes it ("V", "mV", "W"); null when it gives none. */
  unit: string | null
  quantity: ColumnQuantity
  /** May be chosen as the voltage at the load / as the load current. */
  asVoltage: boolean
  asCurrent: boolean
  /** The first value in the column, as written. */
  sample: string | null
}

/** Which columns hold the load voltage and the current, as the technician chose them. */
export interface ColumnChoice {
  voltage: number
  /** null: the file has no current channel to use. */
  current: number | null
}

export class CaptureFormatError extends Error {
  readonly code: CaptureFormatErrorCode
  /** Row (1-based, blank lines not counted) the problem was found on, when there is one. */
  readonly row?: number
  /** The columns to choose from, when the file leaves the choice open. */
  readonly columns?: ColumnInfo[]
  /** The upload field the problem is about, when it is not the file itself. */
  readonly field?: 'voltageColumn' | 'currentColumn'
  constructor(code: CaptureFormatErrorCode, message: string, extra: { row?: number, columns?: ColumnInfo[], field?: 'voltageColumn' | 'currentColumn' } = {}) {
    super(message)
    this.name = 'CaptureFormatError'
    this.code = code
    if (extra.row !== undefined) this.row = extra.row
    if (extra.columns !== undefined) this.columns = extra.columns
    if (extra.field !== undefined) this.field = extra.field
  }
}

export type CsvDelimiter = ',' | ';' | '\t'
export type TextEncoding = 'utf-8' | 'utf-16le' | 'utf-16be'
export type TimeUnit = 's' | 'ms' | 'us' | 'ns'
export type VoltageUnit = 'V' | 'mV' | 'kV' | 'uV'
export type CurrentUnit = 'A' | 'mA' | 'uA' | 'kA'

export interface CaptureColumn {
  /** 0-based column; null when time is generated from the sample interval. */
  index: number | null
  name: string | null
}

/** Data rows left out of the capture, and why. */
export interface SkippedRows {
  count: number
  /** Cells written as over range: ∞, -∞, OL, 9.9E37… */
  overRange: number
  /** Cells left empty (some instruments write nothing when over range). */
  empty: number
  /** Cells that are not numbers at all, and rows with too few cells. */
  unreadable: number
  /** Where: row ranges (1-based, inclusive, blank lines not counted), the first ten. */
  ranges: Array<[number, number]>
  /** Names of the columns whose cells were at fault. */
  columns: string[]
}

export interface CaptureMeta {
  encoding: TextEncoding
  delimiter: CsvDelimiter
  decimalComma: boolean
  /** Non-blank rows before the data (metadata, header and unit rows). */
  headerRows: number
  columns: { time: CaptureColumn, voltage: CaptureColumn, current?: CaptureColumn }
  units: { time: TimeUnit, voltage: VoltageUnit, current?: CurrentUnit }
  /** Data rows read, kept or not. */
  dataRows: number
  droppedRows: number
  skipped: SkippedRows
  samples: number
  /** How time was obtained: a time column, sample index × interval, or date-time stamps. */
  timeSource: 'column' | 'sample_interval' | 'date_time'
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
  /** Share of data rows that may be left out as over range, empty or unreadable (default 0.01). */
  badRowTolerance?: number
  /** The technician's choice of columns, when the file leaves it open. */
  columns?: ColumnChoice
}

export const MAX_CAPTURE_SAMPLES = 2_000_000
