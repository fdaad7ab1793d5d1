/**
 * Instrument metadata above the data: "key,value" rows, "key: value" lines (whatever the
 * delimiter), a value with its unit in the next cell ("Sample interval,20,us"), and header rows
 * whose names sit above their values in the next row ("X,CH1,Start,Increment" over
 * "Sequence,Volt,-0.01,1e-05").
 */
import { CURRENT_UNIT_KEY, INTERVAL_KEY, isBlank, parseQuantity, parseUnit, RATE_KEY, START_KEY, TIME_UNIT_KEY, VOLTAGE_UNIT_KEY, type UnitInfo } from './units'

export interface Metadata {
  /** Seconds between samples, from an interval or a rate. */
  interval?: number
  /** Time of the first sample, in seconds. */
  start?: number
  timeUnit?: UnitInfo
  voltageUnit?: UnitInfo
  currentUnit?: UnitInfo
}

function isNumber(field: string | undefined, decimalComma: boolean): boolean {
  if (isBlank(field)) return false
  const x = Number(decimalComma ? field!.replace(',', '.') : field)
  return x - x === 0
}

/** Adds what one key and its value say to `found`; false when the key means nothing here. */
export function readEntry(found: Metadata, key: string, raw: string | undefined, decimalComma: boolean): boolean {
  if (raw === undefined) return false
  const k = key.trim().replace(/[:=]\s*$/, '').trim()
  if (CURRENT_UNIT_KEY.test(k)) {
    const u = parseUnit(raw)
    if (u?.quantity === 'current') found.currentUnit = u
    return u !== null
  }
  if (TIME_UNIT_KEY.test(k)) {
    const u = parseUnit(raw)
    if (u?.quantity === 'time') found.timeUnit = u
    return u !== null
  }
  if (VOLTAGE_UNIT_KEY.test(k)) {
    const u = parseUnit(raw)
    if (u?.quantity === 'voltage') found.voltageUnit = u
    return u !== null
  }
  const q = parseQuantity(raw, decimalComma)
  if (q === null) return false
  if (INTERVAL_KEY.test(k) && q.kind !== 'rate' && q.value > 0) found.interval = q.value
  else if (RATE_KEY.test(k) && q.kind !== 'time' && q.value > 0) found.interval = 1 / q.value
  else if (START_KEY.test(k) && q.kind !== 'rate') found.start = q.value
  else return false
  return true
}

/** Splits "Sample rate: 50 kHz" into key and value; null when the text holds no colon-separated pair. */
function colonPair(text: string): [string, string] | null {
  const m = /^([^:]*[A-Za-z][^:]*):\s*(.*)$/.exec(text.trim())
  return m === null ? null : [m[1]!, m[2]!]
}

export function readMetadata(rows: string[][], decimalComma: boolean): Metadata {
  const found: Metadata = {}
  for (let r = 0; r < rows.length; r++) {
    const row = rows[r]!
    const first = row[0]
    if (first === undefined || isNumber(first, decimalComma)) continue
    const rest = row.slice(1).filter(f => !isBlank(f))
    const pair = colonPair(first)
    if (pair !== null) {
      // "Sample rate: 50 kHz", or "Sample rate:" with the value in the next cell.
      const value = pair[1].trim() !== '' ? pair[1] : rest[0]
      readEntry(found, pair[0], withUnit(value, pair[1].trim() !== '' ? rest[0] : rest[1], decimalComma), decimalComma)
    }
    else readEntry(found, first, withUnit(rest[0], rest[1], decimalComma), decimalComma)
    // A header row whose names sit above values in the next row.
    const next = rows[r + 1]
    if (next !== undefined) {
      for (let c = 0; c < row.length; c++) {
        if (!isBlank(row[c]) && !isNumber(row[c], decimalComma) && isNumber(next[c], decimalComma)) readEntry(found, row[c]!, next[c], decimalComma)
      }
    }
  }
  return found
}

/** A plain number followed by a unit in the next cell ("20", "us") reads as the number with that unit. */
function withUnit(value: string | undefined, next: string | undefined, decimalComma: boolean): string | undefined {
  if (value === undefined || next === undefined || !/^\s*[-+]?[\d.,]+(?:[eE][-+]?\d+)?\s*$/.test(value)) return value
  const joined = `${value.trim()} ${next.trim()}`
  const q = parseQuantity(joined, decimalComma)
  return q !== null && q.kind !== 'plain' ? joined : value
}
