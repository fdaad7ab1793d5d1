import { BASE_UNIT, MeasurementSpec, SI_PREFIXES, splitUnit } from '../types/measurement'
import type { BaseUnit, Quantity } from '../types/measurement'

/** A reading as the bench typed it, brought to SI. `value` is +Infinity for an open circuit, −Infinity below the scale (`-OL` on a DC range). */
export interface ParsedReading {
  value: number
  unit: BaseUnit | null
  display: string
  open: boolean
  short: boolean
  tolerancePct?: number
}

export type ParseReadingResult = { ok: true, reading: ParsedReading } | { ok: false, error: string }

export interface ParseReadingOptions {
  /** The step's unit (e.g. `kΩ`): a bare number is read in it, prefix included. */
  unit?: string
  /** The step's quantity: fixes the base unit and rejects units that do not fit. */
  quantity?: Quantity
}

export type ReadingVerdict = 'in_range' | 'low' | 'high' | 'open'

export type EvaluateReadingResult
  = | { ok: true, parsed: ParsedReading, verdict: ReadingVerdict, pass: boolean, expected: string, raises: string[] }
    | { ok: false, error: string }

/**
 * A reading that would fail the step only because of how it was probably typed (`580MV` on a
 * diode test): no verdict, and a question for the technician instead.
 */
export interface QuestionedReading {
  ok: true
  parsed: ParsedReading
  verdict: null
  pass: null
  expected: string
  raises: string[]
  /** E.g. `did you mean 580 mV?` */
  question: string
  /** The reading as it would fit, ready to put back in the field, e.g. `580 mV`. */
  suggestion: string
}

export type EvaluateReadingAnswer = EvaluateReadingResult | QuestionedReading

export interface EvaluateReadingOptions {
  /**
   * Ask rather than judge when the typed text fails the step but a likely slip would fit it:
   * an SI prefix in the wrong case (`MV` for `mV`, `mhz` for `MHz`, `MF` for the old µF marking)
   * that puts the reading 10³ or more outside the window, or a lone `1.` (the overrange display)
   * where the number 1 would pass.
   */
  ask?: boolean
}

/** IEC 60062 tolerance letters, in percent. */
export const TOLERANCE_LETTERS: Readonly<Record<string, number>> = {
  B: 0.1,
  C: 0.25,
  D: 0.5,
  F: 1,
  G: 2,
  J: 5,
  K: 10,
  M: 20,
}

const QUANTITY_WORDS: Record<BaseUnit, string> = {
  'V': 'a voltage',
  'A': 'a current',
  'Ω': 'a resistance',
  'F': 'a capacitance',
  'Hz': 'a frequency',
  '°C': 'a temperature',
}

const ENGINEERING_PREFIX: Record<number, string> = {
  [-12]: 'p',
  [-9]: 'n',
  [-6]: 'µ',
  [-3]: 'm',
  0: '',
  3: 'k',
  6: 'M',
  9: 'G',
}

/** Four significant digits, trailing zeros dropped. `toPrecision` also absorbs binary noise (4.7 × 1e3). */
function significant(x: number): string {
  const rounded = Number(x.toPrecision(4))
  return String(Object.is(rounded, -0) ? 0 : rounded)
}

/**
 * Writes an SI value with an engineering prefix and the unit's proper symbol, e.g. `4.7 kΩ`,
 * `0.58 V`, `10 µF`. Temperatures take no prefix. An infinite value is the meter's overload, `OL`.
 */
export function formatQuantity(valueSI: number, unit: BaseUnit): string {
  if (Number.isNaN(valueSI)) return '—'
  if (valueSI === Infinity) return 'OL'
  if (valueSI === -Infinity) return '-OL'
  if (unit === '°C') return `${significant(valueSI)} °C`
  if (valueSI === 0) return `0 ${unit}`
  const magnitude = Math.abs(valueSI)
  // Meters show 0.58 V, not 580 mV: values from 0.1 to 1 keep the bare unit.
  let exponent = magnitude >= 0.1 && magnitude < 1 ? 0 : Math.floor(Math.log10(magnitude) / 3) * 3
  exponent = Math.min(9, Math.max(-12, exponent))
  let mantissa = Number((valueSI / 10 ** exponent).toPrecision(4))
  // 999.96 rounds up to 1000: move to the next prefix instead of printing "1000 k".
  if (Math.abs(mantissa) >= 1000 && exponent < 9) {
    exponent += 3
    mantissa = Number((valueSI / 10 ** exponent).toPrecision(4))
  }
  return `${significant(mantissa)} ${ENGINEERING_PREFIX[exponent]}${unit}`
}

function formatBare(value: number): string {
  return significant(value)
}

function withTolerance(display: string, tolerancePct: number | undefined): string {
  return tolerancePct === undefined ? display : `${display} ±${significant(tolerancePct)} %`
}

// What meters show on overload, and what people type for it. "0L" is the display misread as a
// zero; taking it for 0 Ω would pass a blown fuse as intact, so it is read as open.
const OPEN_TEXT = /^([-+]?)(?:o\.?l\.?|0\.?l|open(?: circuit)?|∞|inf(?:inity)?|over ?load)$/i
// Meters with a 3½-digit display show a lone leading 1 (often with its decimal point) when over range.
const LONE_ONE = /^([-+]?)1\.$/
// A sign typed as a minus sign or an en dash, or set apart by a space ("– 0.58 V").
const LEADING_SIGN = /^([-+\u2212\u2013])\s*/
const SHORT_TEXT = /^short(?:ed)?(?: circuit)?$/i

// Resistor RKM letters stand where the decimal point goes. Lower-case r and k are how the code
// is usually hand-written; a lower-case m keeps its SI meaning (milli), as everywhere else.
const RKM_RESISTANCE_LETTERS: Record<string, number> = { R: 0, r: 0, L: -3, l: -3, m: -3, K: 3, k: 3, M: 6, G: 9 }
// Capacitor codes such as 4n7 and p47 use the SI prefix letters the same way.
const RKM_CAPACITANCE_LETTERS: Record<string, number> = { p: -12, n: -9, u: -6, µ: -6, μ: -6, m: -3 }
const RKM_CODE = /^(\d*)([A-Za-zµμ])(\d*)([BCDFGJKMbcdfgjkm])?$/

const NUMBER_AT_START = /^([+-]?)(\d+(?:[.,]\d*)?|[.,]\d+)(?:[eE]([+\-−]?\d+))?/
const TRAILING_TOLERANCE = /(?:±|\+\/-|\+-)\s*(\d+(?:[.,]\d+)?)\s*%$/

// Base-unit spellings typed at the bench. Multi-letter ones come first so that `degC` is not
// taken for a prefix `deg` before the letter `C`.
const UNIT_SPELLINGS: Array<[RegExp, BaseUnit]> = [
  [/ohms?$/i, 'Ω'],
  [/[\u03A9\u2126]$/, 'Ω'],
  [/(?:°|º|deg)c$/i, '°C'],
  [/hz$/i, 'Hz'],
  [/[Rr]$/, 'Ω'],
  [/[Vv]$/, 'V'],
  [/[Aa]$/, 'A'],
  [/[Ff]$/, 'F'],
  [/[Cc]$/, '°C'],
]

// What follows the unit on AC and DC ranges: `VAC`, `V AC`, `V~`, `Vrms`, `VDC`, `mA DC`.
const CURRENT_KIND = /^(.*[VvAa])(ac|dc|rms|~)$/i
// MFD (and mfd) is the old marking for microfarads on capacitor bodies, whatever its case.
const MICROFARAD_MARKING = /^mfd$/i
// An ohm sign or word after an RKM code (`4k7Ω`, `4K7 ohm`).
const RKM_OHM_SUFFIX = /\s*(?:[\u03A9\u2126]|ohms?)$/i
// Where a DC or AC mark on the reading contradicts the step's quantity.
const KIND_CLASHES: Partial<Record<Quantity, 'ac' | 'dc'>> = { dc_voltage: 'ac', ac_voltage: 'dc' }
// Quantities whose meter ranges are signed, so that `-OL` is an overrange below the scale. A
// diode test, a resistance and an AC voltage have no negative reading: their `-OL` is open.
const SIGNED_BASES: ReadonlySet<BaseUnit> = new Set(['V', 'A', '°C'])
const UNSIGNED_QUANTITIES: ReadonlySet<Quantity> = new Set(['diode_drop', 'ac_voltage'])

/** Prefix letters beyond SI_PREFIXES that technicians type without ambiguity. */
const LOOSE_PREFIXES: Record<string, number> = { K: 3, U: -6 }

function prefixExponent(prefix: string): number | undefined {
  return SI_PREFIXES[prefix] ?? LOOSE_PREFIXES[prefix]
}

interface Context {
  /** Base unit the step reads in, if known. */
  base: BaseUnit | null
  /** Prefix exponent of the step's unit, applied to a bare number. */
  bareExponent: number
  quantity?: Quantity
}

const HINT = 'expected a number with an optional unit, e.g. 4.7 kΩ, 0.58 V, 4K7 or OL'

function fail(error: string): ParseReadingResult {
  return { ok: false, error }
}

function fitError(text: string, unit: BaseUnit, ctx: Context): string | null {
  if (ctx.quantity === undefined || unit === BASE_UNIT[ctx.quantity]) return null
  return `"${text}" is ${QUANTITY_WORDS[unit]} (${unit}); this step reads ${ctx.quantity.replace('_', ' ')} in ${BASE_UNIT[ctx.quantity]}`
}

function finish(text: string, value: number, unit: BaseUnit | null, ctx: Context, tolerancePct?: number): ParseReadingResult {
  if (!Number.isFinite(value)) return fail(`could not read "${text}": the number is out of range`)
  if (unit !== null) {
    const misfit = fitError(text, unit, ctx)
    if (misfit) return fail(misfit)
  }
  const shown = unit === null ? formatBare(value) : formatQuantity(value, unit)
  const reading: ParsedReading = { value, unit, display: withTolerance(shown, tolerancePct), open: false, short: false }
  if (tolerancePct !== undefined) reading.tolerancePct = tolerancePct
  return { ok: true, reading }
}

function readRkm(text: string, ctx: Context): ParseReadingResult | null {
  const code = ctx.base === null || ctx.base === 'Ω' ? text.replace(RKM_OHM_SUFFIX, '') : text
  const m = RKM_CODE.exec(code)
  if (!m) return null
  const [, before = '', letter = '', after = '', toleranceLetter] = m
  if (before === '' && after === '') return null
  // Scaling through the decimal exponent keeps 4K7 at exactly the double nearest 4700.
  const scaled = (exponent: number) => Number(`${before || '0'}.${after || '0'}e${exponent}`)
  let tolerancePct = toleranceLetter === undefined ? undefined : TOLERANCE_LETTERS[toleranceLetter.toUpperCase()]

  if (ctx.base === 'F') {
    const exponent = RKM_CAPACITANCE_LETTERS[letter]
    // "10u" and "10uF" are plain SI values; the SI reader handles them.
    if (exponent === undefined || (after === '' && before !== '')) return null
    // On a capacitor a trailing F is the unit (4u7F), not the ±1 % letter.
    if (toleranceLetter === 'F' || toleranceLetter === 'f') tolerancePct = undefined
    return finish(text, scaled(exponent), 'F', ctx, tolerancePct)
  }
  if (ctx.base !== null && ctx.base !== 'Ω') return null
  const exponent = RKM_RESISTANCE_LETTERS[letter]
  if (exponent === undefined) return null
  // With no step to say "resistance", a value ending in an SI prefix ("10m", "470k") is read
  // as SI with no unit rather than assumed to be ohms.
  if (ctx.base === null && after === '' && !/[RrLl]/.test(letter)) return null
  return finish(text, scaled(exponent), 'Ω', ctx, tolerancePct)
}

interface UnitRead {
  exponent: number
  base: BaseUnit | null
  /** `ac` or `dc` when the unit carried such a mark (`VAC`, `V~`, `Vrms`, `VDC`). */
  kind?: 'ac' | 'dc'
}

function readUnitText(unitText: string, ctx: Context): UnitRead | { error: string } {
  const compact = unitText.replace(/\s+/g, '')
  if (compact === '') return { exponent: ctx.bareExponent, base: ctx.base }
  if (MICROFARAD_MARKING.test(compact)) return { exponent: -6, base: 'F' }
  if ((compact === '°' || compact === 'º') && ctx.base === '°C') return { exponent: 0, base: '°C' }
  const marked = CURRENT_KIND.exec(compact)
  if (marked) {
    const unit = readUnitText(marked[1]!, ctx)
    if ('error' in unit || unit.base === null) return unit
    return { ...unit, kind: marked[2]!.toLowerCase() === 'dc' ? 'dc' : 'ac' }
  }
  for (const [spelling, base] of UNIT_SPELLINGS) {
    const m = spelling.exec(compact)
    if (!m) continue
    const prefix = compact.slice(0, m.index)
    if (base === '°C') {
      if (prefix === '') return { exponent: 0, base }
      continue
    }
    const exponent = prefixExponent(prefix)
    if (exponent !== undefined) return { exponent, base }
  }
  // A prefix alone ("470k", "10m") borrows the step's base unit.
  const exponent = prefixExponent(compact)
  if (exponent !== undefined) {
    if (ctx.base === '°C') return { error: `a temperature takes no prefix ("${unitText}")` }
    return { exponent, base: ctx.base }
  }
  if (/[\d.,+\-−]/.test(compact)) return { error: HINT }
  return { error: `unknown unit "${unitText.trim()}" (Benchlore reads V, A, Ω, F, Hz and °C, with a prefix p, n, µ, m, k, M or G)` }
}

function normaliseSign(typed: string): string {
  return typed.replace(LEADING_SIGN, (_, sign: string) => (sign === '+' ? '+' : '-'))
}

/** The meter's overrange: open, or below the scale (`-OL`) on a range that has a sign. */
function overrange(negative: boolean, ctx: Context): ParseReadingResult {
  const signed = ctx.base !== null && SIGNED_BASES.has(ctx.base) && !(ctx.quantity && UNSIGNED_QUANTITIES.has(ctx.quantity))
  if (negative && signed) {
    return { ok: true, reading: { value: -Infinity, unit: ctx.base, display: '-OL', open: false, short: false } }
  }
  return { ok: true, reading: { value: Infinity, unit: ctx.base, display: 'OL', open: true, short: false } }
}

/**
 * Reads what a technician types for a meter reading: SI values with or without a unit
 * (`470 kΩ`, `0,58V`, `10uF`), IEC 60062 RKM codes with an optional tolerance letter (`4K7J`),
 * the meter's overload (`OL`, `open`, a lone `1.`) and `short`. A bare number takes the step's unit.
 *
 * Also the trade's suffixes: `VAC`, `V AC`, `V~`, `Vrms`, `VDC`, `V DC` (an AC mark on a DC step,
 * or the reverse, is refused), `MFD`/`mfd` for µF, a bare `°` on a temperature step, an ohm
 * sign after an RKM code (`4k7Ω`), a sign typed as `−` or `–` or spaced from the number, and
 * `-OL` as an overrange below the scale on signed ranges (DC volts, amps, °C; elsewhere open).
 */
export function parseReading(text: string, opts: ParseReadingOptions = {}): ParseReadingResult {
  let ctx: Context = { base: null, bareExponent: 0, quantity: opts.quantity }
  if (opts.unit !== undefined) {
    const split = splitUnit(opts.unit)
    if (!split) return fail(`the step's unit "${opts.unit}" is not one Benchlore knows`)
    if (opts.quantity !== undefined && split.base !== BASE_UNIT[opts.quantity]) {
      return fail(`the step's unit "${opts.unit}" does not fit ${opts.quantity.replace('_', ' ')}`)
    }
    ctx = { ...ctx, base: split.base, bareExponent: split.exponent }
  }
  else if (opts.quantity !== undefined) {
    ctx = { ...ctx, base: BASE_UNIT[opts.quantity] }
  }

  const trimmed = typeof text === 'string' ? text.trim() : ''
  if (trimmed === '') return fail('no reading was typed')
  if (trimmed.length > 64) return fail('a reading is at most 64 characters')
  const typed = normaliseSign(trimmed)

  const over = OPEN_TEXT.exec(typed) ?? LONE_ONE.exec(typed)
  if (over) return overrange(over[1] === '-', ctx)
  if (SHORT_TEXT.test(typed)) {
    const display = ctx.base === null ? 'short' : `short (${formatQuantity(0, ctx.base)})`
    return { ok: true, reading: { value: 0, unit: ctx.base, display, open: false, short: true } }
  }

  const rkm = readRkm(typed, ctx)
  if (rkm) return rkm

  const number = NUMBER_AT_START.exec(typed)
  if (!number) return fail(`could not read "${trimmed}": ${HINT}`)
  const [whole, sign = '', digits = '', exp] = number
  let rest = typed.slice(whole.length)
  let tolerancePct: number | undefined
  const tol = TRAILING_TOLERANCE.exec(rest)
  if (tol) {
    tolerancePct = Number(tol[1]!.replace(',', '.'))
    rest = rest.slice(0, tol.index)
  }
  const unit = readUnitText(rest, ctx)
  if ('error' in unit) {
    return fail(unit.error.startsWith('unknown unit') ? unit.error : `could not read "${trimmed}": ${unit.error}`)
  }
  const clash = ctx.quantity === undefined ? undefined : KIND_CLASHES[ctx.quantity]
  if (unit.kind !== undefined && unit.kind === clash) {
    return fail(`"${trimmed}" is ${unit.kind === 'ac' ? 'an AC' : 'a DC'} reading; this step reads ${ctx.quantity!.replace('_', ' ')}`)
  }
  // One decimal exponent, so 10 µF is the double nearest 1e-5 rather than 10 × 1e-6.
  const exponent = Number((exp ?? '0').replace('−', '-')) + unit.exponent
  const magnitude = Number(`${digits.replace(',', '.')}e${exponent}`)
  // + 0 turns a typed "-0" into plain zero.
  const value = (sign === '' || sign === '+' ? magnitude : -magnitude) + 0
  return finish(trimmed, value, unit.base, ctx, tolerancePct)
}

// Readings exactly on a limit must pass even when the limit came from n·(1 ± t) in binary.
const RELATIVE_EPSILON = 1e-9

function below(value: number, limit: number): boolean {
  return value < limit - RELATIVE_EPSILON * Math.max(Math.abs(limit), Math.abs(value), 1e-15)
}

function above(value: number, limit: number): boolean {
  return value > limit + RELATIVE_EPSILON * Math.max(Math.abs(limit), Math.abs(value), 1e-15)
}

/** The good window of a spec in SI units; either end may be missing. */
export function expectedWindow(spec: MeasurementSpec): { min?: number, max?: number } {
  const exponent = splitUnit(spec.unit)?.exponent ?? 0
  // Dividing by 10^6 is correctly rounded; multiplying by 10^-6 (itself inexact) is not.
  const scale = (x: number) => (exponent >= 0 ? x * 10 ** exponent : x / 10 ** -exponent)
  if (spec.nominal !== undefined && spec.tolerancePct !== undefined) {
    const a = scale(spec.nominal * (1 - spec.tolerancePct / 100))
    const b = scale(spec.nominal * (1 + spec.tolerancePct / 100))
    return { min: Math.min(a, b), max: Math.max(a, b) }
  }
  const window: { min?: number, max?: number } = {}
  if (spec.min !== undefined) window.min = scale(spec.min)
  if (spec.max !== undefined) window.max = scale(spec.max)
  return window
}

/** The good answer in words: `4.465 kΩ – 4.935 kΩ`, `≤ 50 mV`, `open`, `open or ≥ 10 MΩ`. */
export function describeExpected(spec: MeasurementSpec): string {
  const base = BASE_UNIT[spec.quantity]
  const { min, max } = expectedWindow(spec)
  let window = ''
  if (min !== undefined && max !== undefined) window = `${formatQuantity(min, base)} – ${formatQuantity(max, base)}`
  else if (min !== undefined) window = `≥ ${formatQuantity(min, base)}`
  else if (max !== undefined) window = `≤ ${formatQuantity(max, base)}`
  if (spec.openExpected) return window === '' ? 'open' : `open or ${window}`
  return window
}

/** The verdict of a parsed reading against a checked spec, by the rules of `evaluateReading`. */
function judge(parsed: ParsedReading, good: MeasurementSpec): { verdict: ReadingVerdict, pass: boolean } {
  const { min, max } = expectedWindow(good)
  if (parsed.open || parsed.value === Infinity) return { verdict: 'open', pass: good.openExpected === true }
  if (min === undefined && max === undefined) return { verdict: 'low', pass: false }
  // A negative overrange is below any finite limit; the tolerance in `below` would swallow −∞.
  if (min !== undefined && (parsed.value === -Infinity || below(parsed.value, min))) return { verdict: 'low', pass: false }
  if (max !== undefined && above(parsed.value, max)) return { verdict: 'high', pass: false }
  return { verdict: 'in_range', pass: true }
}

/** Readings this many times beyond the window, one way or the other, are questioned rather than judged. */
const QUESTION_FACTOR = 1e3

const WRONG_CASE_PREFIX = /^([+-]?(?:\d+(?:[.,]\d*)?|[.,]\d+)(?:[eE][+-]?\d+)?)\s*([mM])(.*)$/

function farOutside(value: number, good: MeasurementSpec): boolean {
  const { min, max } = expectedWindow(good)
  if (!(value > 0 && Number.isFinite(value))) return false
  if (max !== undefined && max > 0 && value >= QUESTION_FACTOR * max) return true
  return min !== undefined && min > 0 && value <= min / QUESTION_FACTOR
}

/** The likely slip behind a failing typed reading, as the reading it should have been. */
function likelySlip(typed: string, parsed: ParsedReading, good: MeasurementSpec): { question: string, suggestion: string } | null {
  const opts: ParseReadingOptions = { unit: good.unit, quantity: good.quantity }
  const base = BASE_UNIT[good.quantity]
  const passes = (text: string) => {
    const alt = parseReading(text, opts)
    return alt.ok && judge(alt.reading, good).pass ? alt.reading : null
  }
  const shown = normaliseSign(typed.trim())
  if (LONE_ONE.test(shown)) {
    const one = passes(shown.slice(0, -1))
    if (!one) return null
    const suggestion = formatQuantity(one.value, base)
    return { question: `did you mean ${suggestion}? "${typed.trim()}" reads as the meter's overrange (OL)`, suggestion }
  }
  const m = WRONG_CASE_PREFIX.exec(shown)
  if (!m || !farOutside(parsed.value, good)) return null
  const [, number = '', prefix = '', rest = ''] = m
  // "MFD" is the µF marking, not a prefix M before "FD".
  if (MICROFARAD_MARKING.test(`${prefix}${rest.replace(/\s+/g, '')}`)) return null
  const alternatives = [prefix === 'M' ? 'm' : 'M']
  // "MF" and "mF" on old capacitor bodies meant microfarads.
  if (base === 'F') alternatives.push('µ')
  for (const alt of alternatives) {
    if (passes(`${number}${alt}${rest}`)) {
      const suggestion = `${number} ${alt}${base}`
      return { question: `did you mean ${suggestion}?`, suggestion }
    }
  }
  return null
}

/**
 * Judges a reading against a step's spec.
 *
 * - A unit that does not fit the step (`4.7 V` on a resistance step) is an error, not a fail:
 *   the technician measured the wrong thing or mistyped, and no cause should be raised.
 * - Open (`OL`) is its own verdict: it passes only when the spec expects open.
 * - A spec that only expects open (a thermal fuse that must have blown, a MOV that must not
 *   conduct) fails any finite reading with verdict `low`: the part conducts where it should not.
 * - Otherwise the value is compared with the window, limits inclusive; `short` reads as 0 and a
 *   negative overrange (`-OL` on a DC step) as −∞.
 * - `raises` lists the cause keys the step points to, and only when the reading fails.
 * - With `{ ask: true }`, a typed reading that fails only through a likely slip is not judged:
 *   the answer has `verdict: null` and a `question`, e.g. `580MV` on a 0.4–0.9 V diode test →
 *   `{ verdict: null, question: 'did you mean 580 mV?', suggestion: '580 mV' }`.
 *
 * @example
 * evaluateReading('0.012', { quantity: 'diode_drop', unit: 'V', min: 0.4, max: 0.9 }, ['bridge_shorted'])
 * // → { ok: true, verdict: 'low', pass: false, raises: ['bridge_shorted'], expected: '0.4 V – 0.9 V', ... }
 * evaluateReading('580MV', { quantity: 'diode_drop', unit: 'V', min: 0.4, max: 0.9 }, [], { ask: true })
 * // → { ok: true, verdict: null, question: 'did you mean 580 mV?', suggestion: '580 mV', ... }
 */
export function evaluateReading(input: string | ParsedReading, spec: MeasurementSpec, failPointsTo?: string[]): EvaluateReadingResult
export function evaluateReading(
  input: string | ParsedReading,
  spec: MeasurementSpec,
  failPointsTo: string[] | undefined,
  options: EvaluateReadingOptions,
): EvaluateReadingAnswer
export function evaluateReading(
  input: string | ParsedReading,
  spec: MeasurementSpec,
  failPointsTo: string[] = [],
  options: EvaluateReadingOptions = {},
): EvaluateReadingAnswer {
  const checked = MeasurementSpec.safeParse(spec)
  if (!checked.success) {
    const issue = checked.error.issues[0]
    return { ok: false, error: `the step's measurement is not valid: ${issue?.message ?? 'unknown problem'}` }
  }
  const good = checked.data
  const base = BASE_UNIT[good.quantity]

  let parsed: ParsedReading
  if (typeof input === 'string') {
    const result = parseReading(input, { unit: good.unit, quantity: good.quantity })
    if (!result.ok) return result
    parsed = result.reading
  }
  else {
    // A reading parsed without context carries no unit; its value is taken as SI in the step's base unit.
    if (input.unit !== null && input.unit !== base) {
      return { ok: false, error: `"${input.display}" is ${QUANTITY_WORDS[input.unit]} (${input.unit}); this step reads ${good.quantity.replace('_', ' ')} in ${base}` }
    }
    parsed = input
  }

  const expected = describeExpected(good)
  const { verdict, pass } = judge(parsed, good)
  if (!pass && options.ask && typeof input === 'string') {
    const slip = likelySlip(input, parsed, good)
    if (slip) return { ok: true, parsed, verdict: null, pass: null, expected, raises: [], ...slip }
  }
  const raises = pass ? [] : [...new Set(failPointsTo)]
  return { ok: true, parsed, verdict, pass, expected, raises }
}
