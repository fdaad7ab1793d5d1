/**
 * Deterministic synthetic mains captures: the voltage a phase-cut dimmer or a faulty power stage
 * puts across its load, sampled the way a scope or logger would. Used by the unit tests, the demo
 * seed and the capture benchmark, so every run sees the same samples for the same options.
 */

import { seededRandom } from '../random'

export type SynthCut = 'none' | 'leading_edge' | 'trailing_edge' | 'half_missing' | 'half_uncontrolled' | 'dead'
export type SynthEdge = 'leading_edge' | 'trailing_edge'

export interface Capture {
  /** Sample instants in seconds, strictly increasing. */
  t: Float64Array
  /** Load voltage in volts. */
  v: Float64Array
  /** Load current in amperes, when a current channel was recorded. */
  i?: Float64Array
}

export interface SourceHarmonic {
  /** Harmonic order (2, 3, 5...). */
  order: number
  /** Amplitude as a fraction of the fundamental. */
  ratio: number
  phaseDeg?: number
}

export interface SynthOptions {
  /** Supply RMS in volts (default 230 V); ignored when `vpk` is given. */
  vrms?: number
  /** Supply peak in volts. */
  vpk?: number
  frequencyHz?: number
  sampleRateHz?: number
  /** Capture length in mains cycles; may be fractional. */
  cycles?: number
  cut?: SynthCut
  /**
   * Leading edge: delay α from the zero crossing before the switch closes. Trailing edge: the
   * switch opens at 180° − α, so both edges at the same α deliver the same RMS. Default 90°.
   */
  firingAngleDeg?: number
  /** Alternative to `firingAngleDeg`: how many degrees of each half-cycle reach the load. */
  conductionAngleDeg?: number
  /** Edge used on the controlled half-cycles of `half_missing` / `half_uncontrolled`. */
  edge?: SynthEdge
  /** Which polarity is missing (`half_missing`) or runs full (`half_uncontrolled`). Default negative. */
  faultPolarity?: 'positive' | 'negative'
  /** White Gaussian noise added to the voltage channel (RMS volts). */
  noiseVrms?: number
  /** Constant added to the voltage channel, as a probe or logger offset would. */
  dcOffset?: number
  /** Resistive load: adds a current channel i = v/R (noise and offset are measurement artefacts, not drawn by the load). */
  load?: { resistanceOhm: number }
  /** White Gaussian noise added to the current channel (RMS amperes). */
  currentNoiseArms?: number
  /** Mains phase at t = 0. */
  startPhaseDeg?: number
  /** Distortion of the supply itself; switching still follows the fundamental's zero crossings. */
  harmonics?: SourceHarmonic[]
  /** Duration of each switching edge in seconds (0 = ideal switch). Real trailing-edge dimmers slow their turn-off to limit interference. */
  edgeDurationS?: number
  /** Seed of the noise generator. */
  seed?: number
}

/** Standard normal deviates from a uniform source (Box–Muller). */
export function seededGaussian(seed: number): () => number {
  const uniform = seededRandom(seed)
  let spare: number | null = null
  return () => {
    if (spare !== null) {
      const s = spare
      spare = null
      return s
    }
    let u = 0
    while (u === 0) u = uniform()
    const r = Math.sqrt(-2 * Math.log(u))
    const phi = 2 * Math.PI * uniform()
    spare = r * Math.sin(phi)
    return r * Math.cos(phi)
  }
}

const DEG = Math.PI / 180

/** Gate of one half-cycle: 1 while the switch conducts, 0 while open, a ramp during a soft edge. */
function gate(edge: SynthEdge | 'full' | 'off', phase: number, alpha: number, ramp: number): number {
  if (edge === 'full') return 1
  if (edge === 'off') return 0
  if (edge === 'leading_edge') {
    if (phase < alpha) return 0
    if (ramp <= 0 || phase >= alpha + ramp) return 1
    return (phase - alpha) / ramp
  }
  const beta = Math.PI - alpha
  if (phase < beta) return 1
  if (ramp <= 0 || phase >= beta + ramp) return 0
  return 1 - (phase - beta) / ramp
}

export function synthesiseCapture(options: SynthOptions = {}): Capture {
  const frequencyHz = options.frequencyHz ?? 50
  const sampleRateHz = options.sampleRateHz ?? 100_000
  const cycles = options.cycles ?? 10
  const vpk = options.vpk ?? (options.vrms ?? 230) * Math.SQRT2
  const cut = options.cut ?? 'none'
  if (!(frequencyHz > 0) || !(sampleRateHz > 0) || !(cycles > 0)) {
    throw new RangeError('frequencyHz, sampleRateHz and cycles must be positive')
  }
  const firingDeg = options.firingAngleDeg ?? (options.conductionAngleDeg !== undefined ? 180 - options.conductionAngleDeg : 90)
  if (firingDeg < 0 || firingDeg > 180) throw new RangeError('firing angle must lie within 0..180°')
  const alpha = firingDeg * DEG
  const edge: SynthEdge = options.edge ?? 'leading_edge'
  const faultPositive = options.faultPolarity === 'positive'

  // What each polarity's switch does, given the kind of cut.
  let positive: SynthEdge | 'full' | 'off'
  let negative: SynthEdge | 'full' | 'off'
  switch (cut) {
    case 'none':
      positive = negative = 'full'
      break
    case 'leading_edge':
      positive = negative = 'leading_edge'
      break
    case 'trailing_edge':
      positive = negative = 'trailing_edge'
      break
    case 'dead':
      positive = negative = 'off'
      break
    case 'half_missing': {
      const present = options.edge !== undefined ? edge : 'full'
      positive = faultPositive ? 'off' : present
      negative = faultPositive ? present : 'off'
      break
    }
    case 'half_uncontrolled':
      positive = faultPositive ? 'full' : edge
      negative = faultPositive ? edge : 'full'
      break
  }

  const n = Math.max(2, Math.round((cycles * sampleRateHz) / frequencyHz))
  const t = new Float64Array(n)
  const v = new Float64Array(n)
  const resistance = options.load?.resistanceOhm
  if (resistance !== undefined && !(resistance > 0)) throw new RangeError('load resistance must be positive')
  const i = resistance !== undefined ? new Float64Array(n) : undefined
  const omega = 2 * Math.PI * frequencyHz
  const phase0 = (options.startPhaseDeg ?? 0) * DEG
  const ramp = (options.edgeDurationS ?? 0) * omega
  const harmonics = options.harmonics ?? []
  const noise = options.noiseVrms ?? 0
  const currentNoise = options.currentNoiseArms ?? 0
  const offset = options.dcOffset ?? 0
  const gaussV = seededGaussian(options.seed ?? 1)
  const gaussI = seededGaussian((options.seed ?? 1) ^ 0x5bd1e995)
  const TWO_PI = 2 * Math.PI

  for (let k = 0; k < n; k++) {
    const time = k / sampleRateHz
    const theta = omega * time + phase0
    let wrapped = theta % TWO_PI
    if (wrapped < 0) wrapped += TWO_PI
    const isPositive = wrapped < Math.PI
    const halfPhase = isPositive ? wrapped : wrapped - Math.PI
    let source = Math.sin(theta)
    for (const h of harmonics) source += h.ratio * Math.sin(h.order * theta + (h.phaseDeg ?? 0) * DEG)
    source *= vpk
    const load = source * gate(isPositive ? positive : negative, halfPhase, alpha, ramp)
    t[k] = time
    v[k] = load + offset + (noise > 0 ? noise * gaussV() : 0)
    if (i !== undefined && resistance !== undefined) {
      i[k] = load / resistance + (currentNoise > 0 ? currentNoise * gaussI() : 0)
    }
  }
  return i !== undefined ? { t, v, i } : { t, v }
}

export type CsvTimeUnit = 's' | 'ms' | 'us' | 'µs'
export type CsvVoltageUnit = 'V' | 'mV' | 'kV'
export type CsvCurrentUnit = 'A' | 'mA'

export interface CsvOptions {
  delimiter?: ',' | ';' | '\t'
  /** Write 0,0125 instead of 0.0125 (needs `;` or tab as the delimiter). */
  decimalComma?: boolean
  timeUnit?: CsvTimeUnit
  voltageUnit?: CsvVoltageUnit
  currentUnit?: CsvCurrentUnit
  /** A second row naming each column's unit. */
  withUnitRow?: boolean
  /** Write the unit into the header instead, as "time (ms)". */
  unitsInHeader?: boolean
  /** true (default) for time,voltage,current; false for none; or the names to write. */
  header?: boolean | string[]
  /** Lines written before the header, as scope exports carry (instrument, sample interval...). */
  metadata?: string[][]
  /** Significant digits; by default the shortest text that reads back to the same double. */
  digits?: number
  lineEnding?: '\n' | '\r\n'
}

const TIME_SCALE: Record<CsvTimeUnit, number> = { s: 1, ms: 1e3, us: 1e6, µs: 1e6 }
const VOLTAGE_SCALE: Record<CsvVoltageUnit, number> = { V: 1, mV: 1e3, kV: 1e-3 }
const CURRENT_SCALE: Record<CsvCurrentUnit, number> = { A: 1, mA: 1e3 }

export function captureToCsv(capture: Capture, options: CsvOptions = {}): string {
  const delimiter = options.delimiter ?? ','
  const decimalComma = options.decimalComma ?? false
  if (decimalComma && delimiter === ',') throw new RangeError('a decimal comma needs ";" or tab as the delimiter')
  const timeUnit = options.timeUnit ?? 's'
  const voltageUnit = options.voltageUnit ?? 'V'
  const currentUnit = options.currentUnit ?? 'A'
  const eol = options.lineEnding ?? '\n'
  const hasCurrent = capture.i !== undefined
  const ts = TIME_SCALE[timeUnit]
  const vs = VOLTAGE_SCALE[voltageUnit]
  const is = CURRENT_SCALE[currentUnit]
  const digits = options.digits
  const format = (x: number): string => {
    const text = digits !== undefined ? x.toPrecision(digits) : String(x)
    return decimalComma ? text.replace('.', ',') : text
  }

  const lines: string[] = []
  for (const row of options.metadata ?? []) lines.push(row.join(delimiter))
  const units = hasCurrent ? [timeUnit, voltageUnit, currentUnit] : [timeUnit, voltageUnit]
  const header = options.header ?? true
  if (header !== false) {
    const names = Array.isArray(header) ? header : hasCurrent ? ['time', 'voltage', 'current'] : ['time', 'voltage']
    lines.push(
      names.map((name, k) => (options.unitsInHeader && units[k] !== undefined ? `${name} (${units[k]})` : name)).join(delimiter),
    )
  }
  if (options.withUnitRow) lines.push(units.join(delimiter))

  const { t, v, i } = capture
  const n = t.length
  const body = new Array<string>(n)
  for (let k = 0; k < n; k++) {
    let row = format(t[k]! * ts) + delimiter + format(v[k]! * vs)
    if (i !== undefined) row += delimiter + format(i[k]! * is)
    body[k] = row
  }
  return lines.concat(body).join(eol) + eol
}
