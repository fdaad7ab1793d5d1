/**
 * Reading the words and numbers of an export: units ("ms", "(mV)", "[µs]", "Volt"), header cells
 * with their unit ("time (s)", "U [mV]", "t/us"), quantities with a unit ("10 us", "50 kHz"),
 * over-range cells and date-time stamps.
 */

export type Quantity = 'time' | 'index' | 'voltage' | 'current' | 'other'
export interface UnitInfo { quantity: Quantity, scale: number, label: string }

/** Applies a unit's scale; sub-units divide by an exact power of ten so that "10 us" reads back as 1e-5, not 9.999999999999999e-6. */
export function toBase(x: number, scale: number): number {
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
// Units of other quantities a logger or a scope's math channel writes: never voltage or current.
defineUnits('other', 'W', 1, ['w', 'kw', 'mw', 'watt', 'watts', 'va', 'kva', 'var', 'wh', 'kwh', 'vs', 'v*a', 'v²', 'v^2', 'a²', 'a^2'])
defineUnits('other', 'Hz', 1, ['hz', 'khz', 'mhz', 'rpm'])
defineUnits('other', '°C', 1, ['°c', 'degc', 'deg c', '°f', 'degf', 'k', '%', 'ohm', 'ohms', 'kohm', 'ω', 'kω', 'db', 'dbv', 'dbm', 'div', 'pa', 'lux', 'lx'])

/** Reads a unit token such as "ms", "(mV)", "[µs]", "Volt"; the micro sign in any of its forms. */
export function parseUnit(raw: string): UnitInfo | null {
  const token = raw
    .trim()
    .replace(/^[([{]\s*|\s*[)\]}]$/g, '')
    .replace(/^[µμ\uFFFD]/, 'u')
    .replace(/^Ω$/, 'ω')
    .toLowerCase()
  return UNIT_TABLE[token] ?? null
}

export interface HeaderCell {
  name: string
  unit: UnitInfo | null
  /** The unit as written, when there is one. */
  unitText: string | null
  /** Bracketed words that are no unit ("Sample (50 kS/s)" → "50 kS/s"). */
  note: string | null
}

/** Splits "time (s)", "U [mV]", "t/ms", "Point @ 20 kS/s" into name, unit and note. */
export function splitHeader(raw: string): HeaderCell {
  const text = raw.trim()
  const bracket = /^(.*?)\s*[([]\s*([^)\]]+?)\s*[)\]]\s*$/.exec(text)
  if (bracket !== null) {
    const unit = parseUnit(bracket[2]!)
    if (unit !== null) return { name: bracket[1]!.trim(), unit, unitText: bracket[2]!, note: null }
    if (bracket[1]!.trim() !== '') return { name: bracket[1]!.trim(), unit: null, unitText: null, note: bracket[2]! }
  }
  const at = /^(.+?)\s*@\s*(.+)$/.exec(text)
  if (at !== null) return { name: at[1]!.trim(), unit: null, unitText: null, note: at[2]! }
  const slash = /^(.+?)\s*\/\s*([^/\s]+)$/.exec(text)
  if (slash !== null) {
    const unit = parseUnit(slash[2]!)
    if (unit !== null) return { name: slash[1]!.trim(), unit, unitText: slash[2]!, note: null }
  }
  return { name: text, unit: null, unitText: null, note: null }
}

export const TIME_NAME = /^(time|t|x|zeit|temps|tiempo|tempo|tid|czas)$|time/i
export const INDEX_NAME = /^(index|idx|sample|samples|sample ?no\.?|no\.?|nr\.?|n|#|point|pt|sequence|seq)$/i
export const VOLTAGE_NAME = /volt|spannung|tension|^(u|v|vin|vout|vload|uload|ul|vl|ch ?1|channel ?1|c1|ch1)$/i
export const CURRENT_NAME = /curr|amp|strom|courant|corriente|^(i|il|iload|iin)$/i
/** Computed channels (power, products, FFTs) are never a measured voltage or current. */
export const MATH_NAME = /^(math|m\d|f\d|fft|calc|power|p|ref ?\d?)\b/i

export const INTERVAL_KEY = /(sampl(e|ing)\s*(interval|period|time))|x\s*increment|^increment$|^xinc|time\s*(step|per\s*(point|sample))|^dt$|^(horizontal\s*)?interval$/i
export const RATE_KEY = /(sampl(e|ing)\s*(rate|frequency))|^rate$|^sa\/s$/i
export const START_KEY = /^(start|x\s*start|x\s*origin|xorigin|start\s*time|t0|first\s*(point|sample)\s*time)$/i
export const TIME_UNIT_KEY = /(horizontal|x|time)\s*units?/i
export const VOLTAGE_UNIT_KEY = /(vertical|y|voltage)\s*units?/i
export const CURRENT_UNIT_KEY = /current\s*units?/i

/** "1e-05", "10us", "10 µs", "100 kS/s", "1 MSa/s", "50 kHz": value with its scale applied. */
export function parseQuantity(raw: string, decimalComma: boolean): { value: number, kind: 'time' | 'rate' | 'plain' } | null {
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

export function isBlank(field: string | undefined): boolean {
  return field === undefined || field.trim() === ''
}

/**
 * Cells an instrument writes when the signal left its range: ∞ and −∞, OL, "Over", and
 * 9.9E37, the value several instruments put in place of a reading (common practice).
 */
const OVER_RANGE = /^[-+−]?(∞|inf|infinity|ol|o\.l\.|over|overrange|over range|ovl|ovf|----)$/i
export const OVER_RANGE_NUMBER = 9.9e37

export function isOverRange(field: string | undefined): boolean {
  if (field === undefined) return false
  const text = field.trim()
  if (OVER_RANGE.test(text)) return true
  const x = Number(text)
  return Math.abs(x) >= OVER_RANGE_NUMBER && x - x === 0
}

const DATE_TIME = /^(\d{4})-(\d{2})-(\d{2})[T ](\d{2}):(\d{2}):(\d{2}(?:[.,]\d+)?)\s*(Z|[+-]\d{2}:?\d{2})?$/
const TIME_OF_DAY = /^(\d{1,2}):(\d{2}):(\d{2}(?:[.,]\d+)?)$/

/** An ISO 8601 date-time ("2025-03-14T09:30:00.000125", a space for the T, a zone) or a time of day ("09:30:00.5"). */
export function isDateTime(field: string | undefined): boolean {
  if (field === undefined) return false
  const text = field.trim()
  return DATE_TIME.test(text) || TIME_OF_DAY.test(text)
}

/**
 * Seconds since the first stamp it read, for a column of date-time stamps. Seconds keep their
 * full written precision: only whole minutes go through Date.UTC, and the minute of the previous
 * stamp is reused while it does not change.
 */
export class DateTimeReader {
  private origin: number | null = null
  private lastMinuteText = ''
  private lastMinute = 0

  read(field: string): number {
    const text = field.trim()
    let minuteText: string
    let seconds: string
    let minuteMs: number
    const full = DATE_TIME.exec(text)
    if (full !== null) {
      minuteText = `${text.slice(0, 16)}${full[7] ?? ''}`
      seconds = full[6]!
      if (minuteText === this.lastMinuteText) minuteMs = this.lastMinute
      else {
        minuteMs = Date.UTC(+full[1]!, +full[2]! - 1, +full[3]!, +full[4]!, +full[5]!) - zoneOffsetMs(full[7])
        this.lastMinuteText = minuteText
        this.lastMinute = minuteMs
      }
    }
    else {
      const time = TIME_OF_DAY.exec(text)
      if (time === null) return Number.NaN
      seconds = time[3]!
      minuteMs = (+time[1]! * 60 + +time[2]!) * 60_000
    }
    if (!(minuteMs - minuteMs === 0)) return Number.NaN
    this.origin ??= minuteMs
    return (minuteMs - this.origin) / 1000 + Number(seconds.replace(',', '.'))
  }
}

function zoneOffsetMs(zone: string | undefined): number {
  if (zone === undefined || zone === 'Z') return 0
  const m = /^([+-])(\d{2}):?(\d{2})$/.exec(zone)!
  return (m[1] === '-' ? -1 : 1) * (+m[2]! * 60 + +m[3]!) * 60_000
}
