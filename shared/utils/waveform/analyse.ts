/**
 * Analysis of a mains capture taken across a load: frequency, RMS and peak, each half-cycle's
 * RMS and conduction angle, the kind of phase cut, DC offset, crest factor, THD and, with a
 * current channel, power and power factor.
 *
 * How it works, and why:
 * 1. Levels come from a histogram (0.1 % / 99.9 % quantiles), so a few spikes do not move them.
 *    The off-state level (the "baseline": where the load sits while the switch is open, and where
 *    a probe offset shows) is the histogram's spike near 0 V when there is one.
 * 2. Zero crossings come from a Schmitt trigger centred between the quantiles, with a band of
 *    ±15 % of the half-range (wider where the off-state noise needs it). Centring between the extremes rather than at 0 V keeps it working
 *    when one polarity is absent. Each crossing is interpolated where the signal passes the
 *    threshold that fired (not the centre, which a flat noisy off-state crosses anywhere). The period is
 *    the slope of crossing time against cycle number, fitted with one intercept per direction
 *    over the crossings that agree with the median period: robust to stray crossings.
 * 3. Phase-cut waveforms are the supply sine switched on and off, so wherever voltage reaches the
 *    load it follows the supply. A least-squares fit of a·sin ωt + b·cos ωt to those samples only,
 *    pooled over 5 cycles so slow drift of the mains frequency is followed, gives the supply's
 *    amplitude and phase. Three refits drop samples far from the previous fit (soft edges,
 *    capacitive tails) and move the baseline by the mean residual (an offset with no flat
 *    off-state to show it). The drift of each cycle's own fitted phase then corrects the period:
 *    that measures frequency over every conducting sample, not over a few crossings. The supply's
 *    zero crossings split the capture into half-cycles, even where the load sits flat at 0 V.
 * 4. In each half-cycle the ratio q = v/supply is ≈ 1 while the switch conducts and ≈ 0 while it
 *    is open. Edges are where q crosses ½ (hysteresis 0.35/0.65, interpolated): for a soft edge,
 *    where the load carries half the supply. Near the zero crossings q is undefined, so a guard
 *    zone of |supply| < max(10 % of peak, 8 σ noise) takes the state of the nearest determined
 *    sample. A cut shorter than that guard (about 6° on a clean capture) reads as no cut, and a
 *    conduction shorter than it as none.
 * 5. RMS, mean, power and the harmonic windows use whole cycles between supply zero crossings,
 *    where the load voltage is ~0, so the sums have no boundary error to speak of.
 * 6. THD: IEC 61000-4-7 windows of 10 cycles at 50 Hz / 12 at 60 Hz (≈ 200 ms, 5 Hz bins), or
 *    every whole cycle when the capture is shorter. Each window is resampled onto 2^m points by
 *    4-point cubic Lagrange interpolation, which puts harmonic h exactly on bin h·cycles, and is
 *    transformed with fft.js. Up to 15 windows (3 s) are combined by the root mean square of
 *    each harmonic, as IEC 61000-4-30 aggregates 150/180 cycles. THD_F = √(Σ_{h=2..H} X_h²)/X_1
 *    with H = 40 by default, capped at 0.475·fs (just under the capture's Nyquist frequency).
 *    Error of the method: the interpolator rolls off as ≈ 1.5 %·ω⁴ (ω in radians per sample),
 *    which `interpolationGain` undoes from the positions the grid points actually took, and it
 *    leaves images around fs, kept off the harmonics by a grid of ≥ 2 fs where they would reach
 *    them. Measured on a supply carrying 2 %/√h of every harmonic up to h 40 (or Nyquist): THD
 *    within 0.12 % of its value at 2 kS/s, 0.04 % at 5 kS/s and 0.003 % from 10 kS/s up; single
 *    harmonics within 0.6 %, 0.35 % and 0.03 %. Jumps (phase cuts) fall between samples in any
 *    capture; their timing uncertainty of half a sample is in the data, not added by resampling.
 *
 * A dead unit is a result, not an error: `dead: true`, cutType 'none', conduction 0°, frequency
 * null, cycles 0, and RMS values over the whole capture. Dead means |v| stays below `deadBelowV`
 * (5 V by default), or no mains period can be found and the RMS is below 12 V (noise or
 * interference on a dead output). A constant 48 V is no dead load: it fails with no mains
 * frequency.
 */
import FFT from 'fft.js'
import { LRUCache } from 'lru-cache'

export type CutType = 'none' | 'leading_edge' | 'trailing_edge' | 'half_missing' | 'irregular'
export type Polarity = 'positive' | 'negative'
/** What one half-cycle looks like. */
export type HalfCycleShape = 'full' | 'leading_cut' | 'trailing_cut' | 'both_cut' | 'absent' | 'erratic'
export const HALF_CYCLE_SHAPES: readonly HalfCycleShape[] = ['full', 'leading_cut', 'trailing_cut', 'both_cut', 'absent', 'erratic']

export interface CaptureSamples {
  t: Float64Array
  v: Float64Array
  i?: Float64Array
}

export interface CurrentFeatures {
  irms: number
  realPowerW: number
  /** P / (Vrms·Irms) at the measuring point; null when either RMS is zero. */
  powerFactor: number | null
  thd: number | null
  /**
   * P / (Vsupply·Irms), with the supply RMS fitted to the conducting parts: the power factor the
   * mains sees through a phase controller (for a resistive load behind a dimmer it falls with the
   * firing angle while `powerFactor` across the load stays 1).
   */
  supplyPowerFactor: number | null
}

/** The features Benchlore stores and compares. */
export interface WaveformFeatures {
  frequencyHz: number | null
  vpk: number
  vrms: number
  halfCycleRms: { positive: number, negative: number }
  /** (Vrms+ − Vrms−)/(Vrms+ + Vrms−): 0 symmetric, +1 negative half absent, −1 positive half absent. */
  asymmetry: number
  conductionAngleDeg: { positive: number, negative: number }
  cutType: CutType
  dcOffset: number
  crestFactor: number | null
  /** THD_F of the voltage as a ratio (0.05 = 5 %). */
  thd: number | null
  samples: number
  cycles: number
  current?: CurrentFeatures
  /** No voltage at the load. */
  dead: boolean
  /** RMS of the supply sine fitted to the conducting parts; null when dead. */
  supplyVrms: number | null
}

export interface HalfCycleDetail {
  index: number
  polarity: Polarity
  /** Supply zero crossings bounding the half-cycle, in seconds. */
  start: number
  end: number
  /** Lies wholly inside the whole-cycle window used for the features. */
  inWindow: boolean
  rms: number
  /** Largest excursion, signed. */
  peak: number
  conductionDeg: number
  shape: HalfCycleShape
  /** Angle from the zero crossing where the switch closes, when that is not at the crossing. */
  switchOnDeg: number | null
  /** Angle from the zero crossing where the switch opens, when that is not at the crossing. */
  switchOffDeg: number | null
}

export interface CutPoint {
  t: number
  edge: 'switch_on' | 'switch_off'
  /** Index into the capture's half-cycles. */
  halfCycle: number
  angleDeg: number
  /** Supply voltage at that instant (what the switch connected or interrupted). */
  supplyV: number
}

export interface HarmonicSpectrum {
  /** Peak amplitude of each harmonic, index = order (0 = DC magnitude). */
  amplitudes: number[]
  thd: number | null
}

export interface HarmonicsResult {
  cyclesPerWindow: number
  windows: number
  cycles: number
  maxHarmonic: number
  binHz: number
  fftSize: number
  voltage: HarmonicSpectrum
  current?: HarmonicSpectrum
  /** cos φ₁ between the fundamentals of voltage and current. */
  displacementFactor?: number | null
}

export interface PolarityStats {
  halfCycles: number
  medianDeg: number
  minDeg: number
  maxDeg: number
  shapes: Record<HalfCycleShape, number>
  /** Median switch-on angle of the leading-cut half-cycles. */
  switchOnDeg: number | null
  /** Median switch-off angle of the trailing-cut half-cycles. */
  switchOffDeg: number | null
}

export interface WaveformAnalysis {
  features: WaveformFeatures
  sampleRateHz: number
  durationS: number
  frequency: {
    hz: number | null
    /** Mains periods spanned by the crossings used. */
    cycles: number
    crossings: number
    /** Robust spread of single-period estimates (1.4826·MAD). */
    spreadHz: number | null
    /** Standard error of the fitted frequency. */
    uncertaintyHz: number | null
    confidence: number
  }
  /** Whole cycles over which RMS, mean, peak and power are taken. */
  window: { start: number, end: number, cycles: number, samples: number }
  cut: {
    type: CutType
    confidence: number
    cycles: number
    /** For half_missing: which polarity is wrong and how. */
    halfFault?: { polarity: Polarity, mode: 'absent' | 'uncontrolled' }
    positive: PolarityStats
    negative: PolarityStats
  }
  supply: {
    vpk: number
    vrms: number
    /** Robust noise estimate around the fitted sine. */
    noiseV: number
    /** The conducting parts follow a sine (robust fit residual under 20 % of peak; a square wave gives 30 %). */
    followsSine: boolean
  } | null
  harmonics: HarmonicsResult | null
  halfCycles: HalfCycleDetail[]
  halfCyclesTotal: number
  cutPoints: CutPoint[]
  cutPointsTotal: number
  warnings: string[]
}

export type WaveformErrorCode = 'INVALID_INPUT' | 'TOO_FEW_CYCLES' | 'SAMPLE_RATE_TOO_LOW' | 'NO_MAINS_FREQUENCY'

export class WaveformError extends Error {
  readonly code: WaveformErrorCode
  constructor(code: WaveformErrorCode, message: string) {
    super(message)
    this.name = 'WaveformError'
    this.code = code
  }
}

export interface AnalyseOptions {
  /** Highest harmonic order in THD (default 40, as IEC 61000-3-2 limits and IEC 61000-4-7 measure). */
  maxHarmonic?: number
  /** Captures sampled slower are refused (default 2 kS/s: 40 samples per 50 Hz cycle, harmonics to h 19). */
  minSampleRateHz?: number
  /** Peak below which the load is taken as dead (default 5 V). */
  deadBelowV?: number
  /** Frequencies accepted as mains (default 40–70 Hz). */
  mainsRangeHz?: [number, number]
  maxHalfCycleDetails?: number
  maxCutPoints?: number
  /** Most 200 ms harmonic windows combined (default 15, i.e. 3 s). */
  maxHarmonicWindows?: number
}

export const MIN_SAMPLE_RATE_HZ = 2000
export const DEFAULT_MAX_HARMONIC = 40
export const DEAD_BELOW_V = 5
/** A capture with no mains period and less RMS than this is a dead load seen through noise. */
export const NOISE_ONLY_BELOW_VRMS = 12

const DEG = 180 / Math.PI
const SHAPE_FULL = 0
const SHAPE_LEADING = 1
const SHAPE_TRAILING = 2
const SHAPE_BOTH = 3
const SHAPE_ABSENT = 4
const SHAPE_ERRATIC = 5

function median(values: ArrayLike<number>): number {
  const sorted = Float64Array.from(values).sort()
  const n = sorted.length
  if (n === 0) return Number.NaN
  const mid = n >> 1
  return n % 2 === 1 ? sorted[mid]! : (sorted[mid - 1]! + sorted[mid]!) / 2
}

function clamp(x: number, lo: number, hi: number): number {
  return x < lo ? lo : x > hi ? hi : x
}

function nextPow2(n: number): number {
  let p = 1
  while (p < n) p <<= 1
  return p
}

function emptyShapes(): Record<HalfCycleShape, number> {
  return { full: 0, leading_cut: 0, trailing_cut: 0, both_cut: 0, absent: 0, erratic: 0 }
}

// Building an FFT's tables costs as much as a transform; captures reuse a handful of sizes.
// Emptied only by eviction (least recently used size first): a size's tables never change.
const fftCache = new LRUCache<number, FFT>({ max: 8 })
function fftOfSize(size: number): FFT {
  let fft = fftCache.get(size)
  if (fft === undefined) {
    fft = new FFT(size)
    fftCache.set(size, fft)
  }
  return fft
}

/** Peak-amplitude spectrum of a real sequence of power-of-two length, bins 0..N/2. */
export function amplitudeSpectrum(samples: Float64Array): Float64Array {
  const size = samples.length
  const fft = fftOfSize(size)
  const out = new Float64Array(2 * size)
  fft.realTransform(out, samples)
  const half = size >> 1
  const amplitudes = new Float64Array(half + 1)
  for (let k = 0; k <= half; k++) {
    const magnitude = Math.hypot(out[2 * k]!, out[2 * k + 1]!)
    amplitudes[k] = k === 0 || k === half ? magnitude / size : (2 * magnitude) / size
  }
  return amplitudes
}

/**
 * Resamples the stretch [start, end) of a uniformly sampled series onto `size` equally spaced
 * points (end excluded, so the result is one period of a periodic extension) with 4-point cubic
 * Lagrange interpolation. When `positions` is given, it counts where between two samples each
 * point fell (as a histogram over its length), for `interpolationGain`.
 */
export function resampleWindow(
  t: Float64Array, y: Float64Array, start: number, end: number, size: number, positions?: Float64Array,
): Float64Array {
  const n = t.length
  const out = new Float64Array(size)
  const step = (end - start) / size
  const bins = positions?.length ?? 0
  // Binary search for the sample at or before `start`, then walk forward with the grid.
  let lo = 0
  let hi = n - 2
  while (lo < hi) {
    const mid = (lo + hi + 1) >> 1
    if (t[mid]! <= start) lo = mid
    else hi = mid - 1
  }
  let k = lo
  for (let m = 0; m < size; m++) {
    const tau = start + m * step
    while (k < n - 2 && t[k + 1]! <= tau) k++
    const t0 = t[k]!
    const u = (tau - t0) / (t[k + 1]! - t0)
    const y0 = y[k]!
    const y1 = y[k + 1]!
    if (k === 0 || k >= n - 2) {
      out[m] = y0 + (y1 - y0) * u
      continue
    }
    if (positions !== undefined) positions[Math.min(bins - 1, Math.max(0, (u * bins) | 0))]!++
    const ym = y[k - 1]!
    const y2 = y[k + 2]!
    const um1 = u - 1
    const um2 = u - 2
    const up1 = u + 1
    out[m] = (-u * um1 * um2 * ym) / 6 + (up1 * um1 * um2 * y0) / 2 - (up1 * u * um2 * y1) / 2 + (up1 * u * um1 * y2) / 6
  }
  return out
}

/**
 * Mean gain of the cubic resampler on a tone of `omega` radians per sample, over the positions
 * the grid points took between samples: |Σ p(u)·Σ_j w_j(u)·e^{iω(j−u)}|. Dividing a harmonic by
 * it undoes the interpolator's roll-off (≈ 1.5 %·(ω)⁴: 0.2 % at a tenth of the sample rate,
 * 33 % at 0.4), leaving well under 0.1 % on a tone at any frequency below Nyquist.
 */
export function interpolationGain(omega: number, positions: Float64Array): number {
  const bins = positions.length
  let total = 0
  for (let b = 0; b < bins; b++) total += positions[b]!
  if (total === 0) return 1
  let re = 0
  let im = 0
  for (let b = 0; b < bins; b++) {
    const p = positions[b]!
    if (p === 0) continue
    const u = (b + 0.5) / bins
    const um1 = u - 1
    const um2 = u - 2
    const up1 = u + 1
    const w = [(-u * um1 * um2) / 6, (up1 * um1 * um2) / 2, (-up1 * u * um2) / 2, (up1 * u * um1) / 6]
    for (let j = -1; j <= 2; j++) {
      const phase = omega * (j - u)
      re += (p / total) * w[j + 1]! * Math.cos(phase)
      im += (p / total) * w[j + 1]! * Math.sin(phase)
    }
  }
  return Math.hypot(re, im)
}

interface EventFit {
  period: number
  reference: number
  crossings: number
  total: number
  spanCycles: number
  spreadHz: number | null
  uncertaintyHz: number | null
}

/**
 * Period from crossing instants: one common slope, one intercept per direction, over crossings
 * that sit within T/8 of the grid of the median period.
 */
function fitCrossings(groups: number[][], dt: number): EventFit | null {
  const periods: number[] = []
  for (const g of groups) for (let j = 1; j < g.length; j++) periods.push(g[j]! - g[j - 1]!)
  if (periods.length === 0) return null
  const tMed = median(periods)
  if (!(tMed > 0)) return null

  const kept: Array<{ k: number[], t: number[] }> = []
  let total = 0
  for (const g of groups) {
    total += g.length
    if (g.length === 0) continue
    const first = g[0]!
    const ks = g.map(x => Math.round((x - first) / tMed))
    const residual = g.map((x, j) => x - first - ks[j]! * tMed)
    const shift = median(residual)
    const best = new Map<number, { t: number, r: number }>()
    for (let j = 0; j < g.length; j++) {
      const r = Math.abs(residual[j]! - shift)
      if (r >= tMed / 8) continue
      const prev = best.get(ks[j]!)
      if (prev === undefined || r < prev.r) best.set(ks[j]!, { t: g[j]!, r })
    }
    const entries = [...best.entries()].sort((a, b) => a[0] - b[0])
    kept.push({ k: entries.map(e => e[0]), t: entries.map(e => e[1].t) })
  }

  let sxy = 0
  let sxx = 0
  let crossings = 0
  let spanCycles = 0
  const means = kept.map(({ k, t }) => {
    const kb = k.reduce((s, x) => s + x, 0) / k.length
    const tb = t.reduce((s, x) => s + x, 0) / t.length
    for (let j = 0; j < k.length; j++) {
      sxy += (k[j]! - kb) * (t[j]! - tb)
      sxx += (k[j]! - kb) ** 2
    }
    crossings += k.length
    if (k.length > 1) spanCycles = Math.max(spanCycles, k[k.length - 1]! - k[0]!)
    return { kb, tb }
  })
  const period = sxx > 0 ? sxy / sxx : tMed

  let sse = 0
  const single: number[] = []
  kept.forEach(({ k, t }, g) => {
    const { kb, tb } = means[g]!
    for (let j = 0; j < k.length; j++) sse += (t[j]! - (tb + (k[j]! - kb) * period)) ** 2
    for (let j = 1; j < k.length; j++) if (k[j]! - k[j - 1]! === 1) single.push(1 / (t[j]! - t[j - 1]!))
  })
  const dof = crossings - kept.filter(x => x.k.length > 0).length - 1
  let uncertaintyHz: number | null = null
  if (dof > 0 && sxx > 0) {
    uncertaintyHz = Math.sqrt(sse / dof / sxx) / (period * period)
  }
  else if (sxx > 0) {
    // Two crossings only: bound the error by the interpolation's half-sample uncertainty.
    uncertaintyHz = dt / Math.sqrt(6) / Math.sqrt(sxx) / (period * period)
  }
  let spreadHz: number | null = null
  if (single.length >= 3) {
    const m = median(single)
    spreadHz = 1.4826 * median(single.map(x => Math.abs(x - m)))
  }
  const firstGroup = kept.find(x => x.k.length > 0)
  const index = kept.indexOf(firstGroup!)
  const reference = means[index]!.tb - means[index]!.kb * period
  return { period, reference, crossings, total, spanCycles, spreadHz, uncertaintyHz }
}

// ---------------------------------------------------------------------------------------------
// Passes over the samples. Each is its own function so that its loop keeps its state in locals.

interface SampleCheck {
  vmin: number
  vmax: number
  /** Largest relative deviation of one sampling interval from the mean interval. */
  jitter: number
  /**
   * The time stamps stay within a quarter interval of an even grid: the sampling is even and any
   * jitter is rounding in the exported time column (7 digits over 10 s is 1 µs).
   */
  evenGrid: boolean
}

function checkSamples(t: Float64Array, v: Float64Array, i: Float64Array | undefined): SampleCheck {
  const n = v.length
  const t0 = t[0]!
  const mean = (t[n - 1]! - t0) / (n - 1)
  let vmin = Infinity
  let vmax = -Infinity
  let dtMin = Infinity
  let dtMax = 0
  let gridDeviation = 0
  for (let k = 0; k < n; k++) {
    const x = v[k]!
    const tk = t[k]!
    if (x - x !== 0 || tk - tk !== 0) throw new WaveformError('INVALID_INPUT', `sample ${k + 1} is not a finite number`)
    if (k > 0) {
      const step = tk - t[k - 1]!
      if (!(step > 0)) throw new WaveformError('INVALID_INPUT', `time does not increase at sample ${k + 1}`)
      if (step < dtMin) dtMin = step
      if (step > dtMax) dtMax = step
    }
    const off = Math.abs(tk - t0 - k * mean)
    if (off > gridDeviation) gridDeviation = off
    if (x < vmin) vmin = x
    if (x > vmax) vmax = x
    if (i !== undefined && i[k]! - i[k]! !== 0) throw new WaveformError('INVALID_INPUT', `current sample ${k + 1} is not a finite number`)
  }
  return { vmin, vmax, jitter: Math.max(dtMax - mean, mean - dtMin) / mean, evenGrid: gridDeviation < 0.25 * mean }
}

interface Levels {
  q001: number
  q999: number
  /** Off-state level: where the load voltage sits while the switch is open (a probe offset shows here). */
  baseline: number
  /** Noise on the off-state level (σ from the spike's half-maximum width); 0 when there is no off-state. */
  offStateNoise: number
}

/** Robust extremes from a histogram, and the off-state baseline as the mean of the samples near zero. */
function measureLevels(v: Float64Array, vmin: number, vmax: number): Levels {
  const n = v.length
  const span = vmax - vmin
  if (!(span > 0)) return { q001: vmin, q999: vmax, baseline: vmin, offStateNoise: 0 }
  // About 16 samples per bin on average, 64..4096 bins: fine enough to find a narrow spike in a
  // long capture, coarse enough that a short one does not read single counts as a spike.
  const BINS = Math.min(4096, Math.max(64, 2 ** Math.floor(Math.log2(n / 16))))
  const hist = new Float64Array(BINS)
  const scale = BINS / span
  for (let k = 0; k < n; k++) {
    let b = ((v[k]! - vmin) * scale) | 0
    if (b >= BINS) b = BINS - 1
    hist[b]!++
  }
  const quantile = (q: number): number => {
    const target = q * n
    let acc = 0
    for (let b = 0; b < BINS; b++) {
      const c = hist[b]!
      if (acc + c >= target) return vmin + (b + (c > 0 ? (target - acc) / c : 0)) / scale
      acc += c
    }
    return vmax
  }
  const q001 = quantile(0.001)
  const q999 = quantile(0.999)
  let baseline = 0
  for (let iter = 0; iter < 3; iter++) {
    const halfBand = 0.1 * Math.max(q999 - baseline, baseline - q001)
    let w = 0
    let s = 0
    for (let b = 0; b < BINS; b++) {
      const centre = vmin + (b + 0.5) / scale
      if (Math.abs(centre - baseline) <= halfBand) {
        w += hist[b]!
        s += hist[b]! * centre
      }
    }
    if (w > 0) baseline = s / w
  }
  // An open switch leaves the load at one level for a good part of each half-cycle: a spike in
  // the histogram, far above the sine's own density near zero (n·bin/(π·peak) per bin). Its
  // level is the baseline; the band mean above would lean towards a one-sided approach of the
  // sine. Without such a spike (a full sine) the fit corrects the band mean later.
  const halfBand = 0.1 * Math.max(q999 - baseline, baseline - q001)
  let lo = Math.max(0, Math.floor((baseline - halfBand - vmin) * scale))
  let hi = Math.min(BINS - 1, Math.floor((baseline + halfBand - vmin) * scale))
  let mode = lo
  for (let b = lo; b <= hi; b++) if (hist[b]! > hist[mode]!) mode = b
  const sineDensity = n / (scale * Math.PI * Math.max(q999 - baseline, baseline - q001))
  let offStateNoise = 0
  if (hist[mode]! > 5 * sineDensity) {
    // Half-maximum width of the spike, then the exact mean of its samples.
    lo = mode
    hi = mode
    while (lo > 0 && hist[lo - 1]! > hist[mode]! / 2) lo--
    while (hi < BINS - 1 && hist[hi + 1]! > hist[mode]! / 2) hi++
    const from = vmin + lo / scale
    const to = vmin + (hi + 1) / scale
    let w = 0
    let s = 0
    for (let k = 0; k < n; k++) {
      const x = v[k]!
      if (x >= from && x < to) {
        w++
        s += x
      }
    }
    if (w > 0) baseline = s / w
    // A normal spike is 2.3548 σ wide at half maximum.
    offStateNoise = (to - from) / 2.3548
  }
  return { q001, q999, baseline, offStateNoise }
}

/**
 * Schmitt-trigger crossings (band centre ± band), each placed where the signal passes the
 * threshold that fired it, interpolated between that sample and the one before. Interpolating
 * at the threshold rather than at the centre matters where the load sits flat at 0 V: there the
 * last pass through the centre is wherever the noise put it.
 */
function findCrossings(t: Float64Array, v: Float64Array, centre: number, band: number): { rising: number[], falling: number[] } {
  const n = v.length
  const hi = centre + band
  const lo = centre - band
  const rising: number[] = []
  const falling: number[] = []
  let state = 0
  for (let k = 0; k < n; k++) {
    const x = v[k]!
    if (x > hi) {
      if (state === -1) rising.push(interpolateLevel(t, v, k - 1, hi))
      state = 1
    }
    else if (x < lo) {
      if (state === 1) falling.push(interpolateLevel(t, v, k - 1, lo))
      state = -1
    }
  }
  return { rising, falling }
}

function interpolateLevel(t: Float64Array, v: Float64Array, j: number, level: number): number {
  const a = v[j]!
  const b = v[j + 1]!
  const tj = t[j]!
  return a === b ? tj : tj + ((level - a) / (b - a)) * (t[j + 1]! - tj)
}

/**
 * The supply sine, fitted frame by frame (frame c = one period from the crossing reference) over
 * the samples where voltage reaches the load. Each frame's fit pools the 5 frames around it.
 */
interface SupplyFit {
  frames: number
  /** Off-state level, refined from the histogram's estimate by the fit. */
  baseline: number
  /** Start of frame 0. */
  frameStart: number
  period: number
  a: Float64Array
  b: Float64Array
  amp: Float64Array
  psi: Float64Array
  /** |supply| below which v/supply is too uncertain to tell conduction from cut. */
  guard: Float64Array
  noiseV: number
  vpk: number
  /** Drift of the whole frames' own phases, in radians per frame, and its standard error. */
  phaseSlope: number | null
  phaseSlopeSe: number | null
}

/** The conducting samples the fit works on: frame, phasor and voltage, in compact arrays. */
interface FitSamples {
  count: number
  frame: Int32Array
  s: Float64Array
  c: Float64Array
  x: Float64Array
}

/**
 * Solves each frame's 2×2 normal equations from the sums of the 5 frames around it. Frames cut
 * by the capture's ends are left out of the pool when whole frames are at hand: where the
 * voltage is not quite a sine, a fit over part of a cycle leans towards the part it saw.
 */
function solveFrames(sums: Float64Array, frames: number, whole: Uint8Array, a: Float64Array, b: Float64Array): boolean {
  const pooled = new Float64Array(6)
  const solve = (s: Float64Array, f: number): boolean => {
    const det = s[0]! * s[2]! - s[1]! * s[1]!
    const tr = s[0]! + s[2]!
    if (s[5]! < 8 || !(det > 1e-6 * tr * tr)) return false
    a[f] = (s[3]! * s[2]! - s[4]! * s[1]!) / det
    b[f] = (s[4]! * s[0]! - s[3]! * s[1]!) / det
    return true
  }
  let anyWhole = false
  for (let f = 0; f < frames; f++) if (whole[f] === 1) anyWhole = true
  for (let f = 0; f < frames; f++) {
    if (anyWhole && whole[f] !== 1) continue
    for (let q = 0; q < 6; q++) pooled[q]! += sums[f * 6 + q]!
  }
  if (!solve(pooled, 0)) return false
  const globalA = a[0]!
  const globalB = b[0]!
  for (let f = 0; f < frames; f++) {
    pooled.fill(0)
    let lo = Math.max(0, f - 2)
    let hi = Math.min(frames - 1, f + 2)
    if (anyWhole) {
      // Keep the pool five frames wide where the capture allows, on whole frames only.
      while (lo > 0 && hi - lo < 4) lo--
      while (hi < frames - 1 && hi - lo < 4) hi++
    }
    for (let g = lo; g <= hi; g++) {
      if (anyWhole && whole[g] !== 1) continue
      for (let q = 0; q < 6; q++) pooled[q]! += sums[g * 6 + q]!
    }
    if (!solve(pooled, f)) {
      a[f] = globalA
      b[f] = globalB
    }
  }
  return true
}

/** Normal-equation sums per frame over the fit samples within `tol` of the current fit (all when tol is null). */
function accumulateFit(samples: FitSamples, fit: SupplyFit, tol: Float64Array | null, sums: Float64Array): void {
  const { count, frame, s, c, x } = samples
  const { a, b } = fit
  sums.fill(0)
  for (let k = 0; k < count; k++) {
    const f = frame[k]!
    const sk = s[k]!
    const ck = c[k]!
    const xk = x[k]!
    if (tol !== null) {
      const r = xk - (a[f]! * sk + b[f]! * ck)
      if (r >= tol[f]! || r <= -tol[f]!) continue
    }
    const o = f * 6
    sums[o]! += sk * sk
    sums[o + 1]! += sk * ck
    sums[o + 2]! += ck * ck
    sums[o + 3]! += xk * sk
    sums[o + 4]! += xk * ck
    sums[o + 5]!++
  }
}

/**
 * Residuals of the fit over at most 4096 fit samples: robust noise (1.4826·median |r|, ±2 % on
 * σ) and the 3σ-clipped mean, which is the offset of the conducting parts from the baseline.
 */
function residualStats(samples: FitSamples, fit: SupplyFit): { noise: number, offset: number } {
  const { count, frame, s, c, x } = samples
  const stride = Math.max(1, Math.floor(count / 4096))
  const signed = new Float64Array(Math.ceil(count / stride))
  let m = 0
  for (let k = 0; k < count; k += stride) {
    const f = frame[k]!
    signed[m++] = x[k]! - (fit.a[f]! * s[k]! + fit.b[f]! * c[k]!)
  }
  if (m === 0) return { noise: 0, offset: 0 }
  const r = signed.subarray(0, m)
  const spread = 1.4826 * median(r.map(Math.abs))
  let sum = 0
  let kept = 0
  for (const e of r) {
    if (Math.abs(e) <= 3 * spread) {
      sum += e
      kept++
    }
  }
  const offset = kept > 0 ? sum / kept : 0
  return { noise: 1.4826 * median(r.map(e => Math.abs(e - offset))), offset }
}

function fitSupply(
  t: Float64Array, v: Float64Array, baseline: number, present: number, t0: number, period: number, evenlySampled: boolean,
): SupplyFit | null {
  const n = v.length
  const omega = (2 * Math.PI) / period
  const frameBase = Math.floor((t[0]! - t0) / period)
  const frames = Math.floor((t[n - 1]! - t0) / period) - frameBase + 1
  const fit: SupplyFit = {
    frames,
    baseline,
    frameStart: t0 + frameBase * period,
    period,
    a: new Float64Array(frames),
    b: new Float64Array(frames),
    amp: new Float64Array(frames),
    psi: new Float64Array(frames),
    guard: new Float64Array(frames),
    noiseV: 0,
    vpk: 0,
    phaseSlope: null,
    phaseSlopeSe: null,
  }
  // About 500 samples per cycle pin two parameters per frame as well as thousands would, at a
  // fraction of the cost: the fit uses every `stride`-th sample where voltage reaches the load.
  const perCycle = (period * (n - 1)) / (t[n - 1]! - t[0]!)
  const stride = Math.max(1, Math.floor(perCycle / 500))
  const room = Math.ceil(n / stride)
  const samples: FitSamples = { count: 0, frame: new Int32Array(room), s: new Float64Array(room), c: new Float64Array(room), x: new Float64Array(room) }
  const phasor = new Phasor(t, omega, t0, evenlySampled, stride)
  let f = 0
  let frameEnd = fit.frameStart + period
  for (let k = 0; k < n; k += stride) {
    const tk = t[k]!
    while (tk >= frameEnd && f < frames - 1) {
      f++
      frameEnd += period
    }
    phasor.advance(k)
    const xk = v[k]! - baseline
    if (xk > present || xk < -present) {
      const m = samples.count++
      samples.frame[m] = f
      samples.s[m] = phasor.s
      samples.c[m] = phasor.c
      samples.x[m] = xk
    }
  }
  const whole = new Uint8Array(frames)
  const dt = (t[n - 1]! - t[0]!) / (n - 1)
  for (let g = 0; g < frames; g++) {
    const start = fit.frameStart + g * period
    whole[g] = start >= t[0]! - dt && start + period <= t[n - 1]! + dt ? 1 : 0
  }
  const sums = new Float64Array(frames * 6)
  accumulateFit(samples, fit, null, sums)
  if (!solveFrames(sums, frames, whole, fit.a, fit.b)) return null
  // A probe offset shifts the conducting parts off the histogram's baseline when there is no
  // flat off-state to anchor it (a full sine): each round moves the baseline by the fit's mean
  // residual. Soft edges and capacitive tails pull a least-squares fit off too: each round refits
  // over the samples near the previous fit, with a tolerance that tightens as the noise drops.
  const shift = (offset: number): void => {
    fit.baseline += offset
    for (let k = 0; k < samples.count; k++) samples.x[k]! -= offset
  }
  let stats = residualStats(samples, fit)
  shift(stats.offset)
  let noiseV = stats.noise
  const tol = new Float64Array(frames)
  for (let round = 0; round < 3; round++) {
    for (let g = 0; g < frames; g++) tol[g] = Math.max(4 * noiseV, 0.01 * Math.hypot(fit.a[g]!, fit.b[g]!))
    accumulateFit(samples, fit, tol, sums)
    if (!solveFrames(sums, frames, whole, fit.a, fit.b)) break
    stats = residualStats(samples, fit)
    shift(stats.offset)
    noiseV = stats.noise
  }
  fit.noiseV = noiseV
  // Phase of each whole frame on its own: its drift from frame to frame is the error of the
  // crossing-based frequency, measured over every conducting sample rather than a few crossings.
  // Weighted by each phase's variance from its normal equations, σ²·(b²·Caa + a²·Cbb − 2ab·Cab)/A⁴.
  // A wide tolerance here, dropping only gross outliers (spikes): what a tight one drops
  // (distortion peaks, edge samples) varies from frame to frame with the sample grid, while the
  // samples themselves repeat each cycle and so shift every frame's phase alike.
  for (let g = 0; g < frames; g++) tol[g] = Math.max(10 * noiseV, 0.1 * Math.hypot(fit.a[g]!, fit.b[g]!))
  accumulateFit(samples, fit, tol, sums)
  const sigma2 = Math.max(noiseV, 1e-9 * (Math.abs(fit.a[0]!) + Math.abs(fit.b[0]!))) ** 2
  const phases: number[] = []
  const indices: number[] = []
  const weights: number[] = []
  for (let g = 0; g < frames; g++) {
    const o = g * 6
    const ss = sums[o]!
    const sc = sums[o + 1]!
    const cc = sums[o + 2]!
    const det = ss * cc - sc * sc
    if (whole[g] !== 1 || sums[o + 5]! < 3 || !(det > 1e-6 * (ss + cc) ** 2)) continue
    const a = (sums[o + 3]! * cc - sums[o + 4]! * sc) / det
    const b = (sums[o + 4]! * ss - sums[o + 3]! * sc) / det
    const amp2 = a * a + b * b
    const variance = (sigma2 * (b * b * cc + a * a * ss + 2 * a * b * sc)) / det / (amp2 * amp2)
    let psi = Math.atan2(b, a)
    const last = phases[phases.length - 1]
    if (last !== undefined) psi += 2 * Math.PI * Math.round((last - psi) / (2 * Math.PI))
    phases.push(psi)
    indices.push(g)
    weights.push(1 / variance)
  }
  if (phases.length >= 2) {
    const m = phases.length
    let w = 0
    let gb = 0
    let pb = 0
    for (let j = 0; j < m; j++) {
      w += weights[j]!
      gb += weights[j]! * indices[j]!
      pb += weights[j]! * phases[j]!
    }
    gb /= w
    pb /= w
    let sxy = 0
    let sxx = 0
    for (let j = 0; j < m; j++) {
      sxy += weights[j]! * (indices[j]! - gb) * (phases[j]! - pb)
      sxx += weights[j]! * (indices[j]! - gb) ** 2
    }
    const slope = sxy / sxx
    // The variances give the slope's error if the phases scatter as the noise says; more
    // scatter than that (drift that is not linear, distortion) shows in the residuals.
    let seModel = Math.sqrt(1 / sxx)
    if (m > 2) {
      let chi2 = 0
      for (let j = 0; j < m; j++) chi2 += weights[j]! * (phases[j]! - pb - slope * (indices[j]! - gb)) ** 2
      seModel = Math.max(seModel, Math.sqrt(chi2 / (m - 2) / sxx))
    }
    fit.phaseSlope = slope
    fit.phaseSlopeSe = seModel
  }
  for (let g = 0; g < frames; g++) {
    const amp = Math.hypot(fit.a[g]!, fit.b[g]!)
    fit.amp[g] = amp
    fit.psi[g] = Math.atan2(fit.b[g]!, fit.a[g]!)
    fit.guard[g] = Math.min(0.5 * amp, Math.max(0.1 * amp, 8 * noiseV))
  }
  fit.vpk = median(fit.amp)
  return fit
}

/**
 * sin and cos of ω(t − t0) sample by sample. On evenly sampled captures it rotates by a fixed
 * step (a fraction of the cost of Math.sin and Math.cos), re-anchored on the time stamps every
 * 256 steps so rounding cannot build up.
 */
class Phasor {
  s = 0
  c = 1
  private steps = 0
  private readonly t: Float64Array
  private readonly omega: number
  private readonly t0: number
  private readonly even: boolean
  private readonly cosStep: number
  private readonly sinStep: number
  constructor(t: Float64Array, omega: number, t0: number, even: boolean, stride: number) {
    const n = t.length
    const step = (omega * stride * (t[n - 1]! - t[0]!)) / (n - 1)
    this.t = t
    this.omega = omega
    this.t0 = t0
    this.even = even
    this.cosStep = Math.cos(step)
    this.sinStep = Math.sin(step)
  }

  /** Moves to sample k: the next one in stride, or any sample after a reset. */
  advance(k: number): void {
    if (!this.even || (this.steps++ & 255) === 0) {
      const th = this.omega * (this.t[k]! - this.t0)
      this.s = Math.sin(th)
      this.c = Math.cos(th)
      return
    }
    const s = this.s
    this.s = s * this.cosStep + this.c * this.sinStep
    this.c = this.c * this.cosStep - s * this.sinStep
  }
}

/** Per half-cycle results, in capture order. */
interface Segmentation {
  halves: number
  start: Float64Array
  end: Float64Array
  positive: Uint8Array
  count: Float64Array
  sum: Float64Array
  sum2: Float64Array
  max: Float64Array
  min: Float64Array
  i2: Float64Array | null
  vi: Float64Array | null
  conduction: Float64Array
  shape: Uint8Array
  on: Float64Array
  off: Float64Array
  cutPoints: CutPoint[]
  cutPointsTotal: number
  maxCutPoints: number
}

/** Instant where d = v·sgn − ½·|supply| crosses zero between samples j and j + 1. */
function edgeTime(
  t: Float64Array, v: Float64Array, fit: SupplyFit, baseline: number, sgn: number, j: number, dj: number, f: number, omega: number, t0: number,
): number {
  const j2 = j + 1
  const th = omega * (t[j2]! - t0)
  const m2 = fit.a[f]! * Math.sin(th) + fit.b[f]! * Math.cos(th)
  const d2 = (v[j2]! - baseline) * sgn - 0.5 * m2 * sgn
  const tj = t[j]!
  return dj === d2 ? tj : tj + (dj / (dj - d2)) * (t[j2]! - tj)
}

/**
 * Turns the conduction runs of one half-cycle into its shape, conduction angle, switching angles
 * and cut points. Runs are time pairs; NaN marks an end held to the zero crossing.
 */
function closeHalfCycle(seg: Segmentation, h: number, endTime: number, runs: number[], fit: SupplyFit, f: number, t0: number, omega: number): void {
  seg.end[h] = endTime
  const start = seg.start[h]!
  const len = endTime - start
  const angle = (x: number, atEnd: boolean): number => (Number.isNaN(x) ? (atEnd ? 180 : 0) : clamp((180 * (x - start)) / len, 0, 180))
  // Merge runs split by a glitch (gap < 2°), then drop slivers (< 1°).
  const merged: Array<[number, number, number, number]> = []
  for (let r = 0; r < runs.length; r += 2) {
    const a = angle(runs[r]!, false)
    const b = angle(runs[r + 1]!, true)
    const last = merged[merged.length - 1]
    if (last !== undefined && a - last[1] < 2) {
      last[1] = b
      last[3] = runs[r + 1]!
    }
    else merged.push([a, b, runs[r]!, runs[r + 1]!])
  }
  const kept = merged.filter(r => r[1] - r[0] >= 1)
  let conduction = 0
  for (const r of kept) conduction += r[1] - r[0]
  let shape = SHAPE_ABSENT
  if (kept.length === 1) {
    const fromZero = Number.isNaN(kept[0]![2])
    const toZero = Number.isNaN(kept[0]![3])
    shape = fromZero && toZero ? SHAPE_FULL : toZero ? SHAPE_LEADING : fromZero ? SHAPE_TRAILING : SHAPE_BOTH
  }
  else if (kept.length > 1) shape = SHAPE_ERRATIC
  let on = Number.NaN
  let off = Number.NaN
  const supplyAt = (time: number): number => fit.a[f]! * Math.sin(omega * (time - t0)) + fit.b[f]! * Math.cos(omega * (time - t0))
  for (const r of kept) {
    if (!Number.isNaN(r[2])) {
      if (Number.isNaN(on)) on = r[0]
      seg.cutPointsTotal++
      if (seg.cutPoints.length < seg.maxCutPoints) seg.cutPoints.push({ t: r[2], edge: 'switch_on', halfCycle: h, angleDeg: r[0], supplyV: supplyAt(r[2]) })
    }
    if (!Number.isNaN(r[3])) {
      off = r[1]
      seg.cutPointsTotal++
      if (seg.cutPoints.length < seg.maxCutPoints) seg.cutPoints.push({ t: r[3], edge: 'switch_off', halfCycle: h, angleDeg: r[1], supplyV: supplyAt(r[3]) })
    }
  }
  seg.conduction[h] = conduction
  seg.shape[h] = shape
  seg.on[h] = on
  seg.off[h] = off
}

/**
 * Splits the capture at the supply's zero crossings and follows v/supply through each
 * half-cycle: on above 0.65, off below 0.35, edges interpolated where it crosses ½.
 */
function segmentHalfCycles(
  t: Float64Array, v: Float64Array, i: Float64Array | undefined, fit: SupplyFit, baseline: number, t0: number, omega: number,
  evenlySampled: boolean, maxCutPoints: number,
): Segmentation {
  const n = v.length
  const cap = 2 * fit.frames + 4
  const seg: Segmentation = {
    halves: 0,
    start: new Float64Array(cap),
    end: new Float64Array(cap),
    positive: new Uint8Array(cap),
    count: new Float64Array(cap),
    sum: new Float64Array(cap),
    sum2: new Float64Array(cap),
    max: new Float64Array(cap).fill(-Infinity),
    min: new Float64Array(cap).fill(Infinity),
    i2: i !== undefined ? new Float64Array(cap) : null,
    vi: i !== undefined ? new Float64Array(cap) : null,
    conduction: new Float64Array(cap),
    shape: new Uint8Array(cap),
    on: new Float64Array(cap),
    off: new Float64Array(cap),
    cutPoints: [],
    cutPointsTotal: 0,
    maxCutPoints,
  }
  const { a, b, psi, guard, frames, period } = fit
  const phasor = new Phasor(t, omega, t0, evenlySampled, 1)
  let f = 0
  let frameEnd = fit.frameStart + period
  const { count, sum, sum2, max, min } = seg
  const i2 = seg.i2
  const vi = seg.vi
  const runs: number[] = []
  let hCur = Number.NEGATIVE_INFINITY
  let hp = -1
  let sgn = 1
  let zone = -1 // -1 not yet determined, 0 off, 1 on
  let zoneClosed = false
  let runOpen = Number.NaN
  let lastNonNeg = -1
  let lastNeg = -1
  let lastNonNegD = 0
  let lastNegD = 0
  for (let k = 0; k < n; k++) {
    const tk = t[k]!
    while (tk >= frameEnd && f < frames - 1) {
      f++
      frameEnd += period
    }
    phasor.advance(k)
    let h = Math.floor((omega * (tk - t0) + psi[f]!) / Math.PI)
    // Frame-to-frame phase steps are tiny but must never send a sample back a half-cycle.
    if (h < hCur) h = hCur
    if (h !== hCur) {
      const startTime = t0 + (h * Math.PI - psi[f]!) / omega
      if (hp >= 0) {
        if (zone === 1 && !zoneClosed) runs.push(runOpen, Number.NaN)
        closeHalfCycle(seg, hp, startTime, runs, fit, f, t0, omega)
      }
      hCur = h
      hp++
      if (hp >= cap) throw new WaveformError('INVALID_INPUT', 'the time axis is too irregular to split into half-cycles')
      seg.start[hp] = startTime
      const positive = ((h % 2) + 2) % 2 === 0
      seg.positive[hp] = positive ? 1 : 0
      sgn = positive ? 1 : -1
      zone = -1
      zoneClosed = false
      runOpen = Number.NaN
      runs.length = 0
      lastNonNeg = -1
      lastNeg = -1
    }
    const x = v[k]!
    count[hp]!++
    sum[hp]! += x
    sum2[hp]! += x * x
    if (x > max[hp]!) max[hp] = x
    if (x < min[hp]!) min[hp] = x
    if (i2 !== null && vi !== null) {
      const c = i![k]!
      i2[hp]! += c * c
      vi[hp]! += x * c
    }
    if (zoneClosed) continue
    const m = (a[f]! * phasor.s + b[f]! * phasor.c) * sgn
    if (m <= guard[f]!) {
      if (zone !== -1) {
        // Trailing guard: the state on entering it holds to the zero crossing.
        zoneClosed = true
        if (zone === 1) runs.push(runOpen, Number.NaN)
      }
      continue
    }
    const xs = (x - baseline) * sgn
    const d = xs - 0.5 * m
    if (zone === -1) {
      // Leading guard: the first determined sample's state reaches back to the zero crossing.
      zone = xs > 0.5 * m ? 1 : 0
      runOpen = Number.NaN
    }
    else if (zone === 1 && xs < 0.35 * m) {
      runs.push(runOpen, lastNonNeg >= 0 ? edgeTime(t, v, fit, baseline, sgn, lastNonNeg, lastNonNegD, f, omega, t0) : t[k]!)
      zone = 0
    }
    else if (zone === 0 && xs > 0.65 * m) {
      runOpen = lastNeg >= 0 ? edgeTime(t, v, fit, baseline, sgn, lastNeg, lastNegD, f, omega, t0) : t[k]!
      zone = 1
    }
    if (d >= 0) {
      lastNonNeg = k
      lastNonNegD = d
    }
    else {
      lastNeg = k
      lastNegD = d
    }
  }
  if (hp >= 0) {
    if (zone === 1 && !zoneClosed) runs.push(runOpen, Number.NaN)
    closeHalfCycle(seg, hp, t0 + ((hCur + 1) * Math.PI - psi[f]!) / omega, runs, fit, f, t0, omega)
  }
  seg.halves = hp + 1
  return seg
}

interface PolarityAccumulator {
  count: number
  sum2: number
  conduction: number[]
  on: number[]
  off: number[]
  shapes: Record<HalfCycleShape, number>
}

function polarityStats(p: PolarityAccumulator): PolarityStats {
  let lo = Infinity
  let hi = -Infinity
  for (const c of p.conduction) {
    if (c < lo) lo = c
    if (c > hi) hi = c
  }
  return {
    halfCycles: p.conduction.length,
    medianDeg: median(p.conduction),
    minDeg: lo,
    maxDeg: hi,
    shapes: p.shapes,
    switchOnDeg: p.on.length > 0 ? median(p.on) : null,
    switchOffDeg: p.off.length > 0 ? median(p.off) : null,
  }
}

interface CutVerdict {
  type: CutType
  confidence: number
  halfFault?: { polarity: Polarity, mode: 'absent' | 'uncontrolled' }
}

/**
 * Picks the regular pattern that most half-cycles agree with. Confidence = share of agreeing
 * half-cycles × clarity, where clarity falls from 1 to ½ as the cut depth nears the guard angle
 * (a cut that shallow could as well be no cut).
 */
function classifyCut(pos: PolarityStats, neg: PolarityStats, guardDeg: number): CutVerdict {
  const judged = pos.halfCycles + neg.halfCycles
  const share = (posOk: readonly HalfCycleShape[], negOk: readonly HalfCycleShape[]): number => {
    let ok = 0
    for (const s of posOk) ok += pos.shapes[s]
    for (const s of negOk) ok += neg.shapes[s]
    return ok / judged
  }
  const present = ['full', 'leading_cut', 'trailing_cut', 'both_cut'] as const
  const cut = ['leading_cut', 'trailing_cut'] as const
  const clarity = (depthDeg: number): number => 0.5 + 0.5 * clamp((depthDeg - guardDeg) / 10, 0, 1)
  const depth = (p: PolarityStats): number => 180 - p.medianDeg
  const bothDepth = Math.min(depth(pos), depth(neg))
  const candidates: Array<CutVerdict & { score: number }> = [
    { type: 'none', score: share(['full'], ['full']), confidence: 1 },
    { type: 'leading_edge', score: share(['leading_cut'], ['leading_cut']), confidence: clarity(bothDepth) },
    { type: 'trailing_edge', score: share(['trailing_cut'], ['trailing_cut']), confidence: clarity(bothDepth) },
    { type: 'half_missing', score: share(['absent'], present), confidence: 1, halfFault: { polarity: 'positive', mode: 'absent' } },
    { type: 'half_missing', score: share(present, ['absent']), confidence: 1, halfFault: { polarity: 'negative', mode: 'absent' } },
    { type: 'half_missing', score: share(['full'], cut), confidence: clarity(depth(neg)), halfFault: { polarity: 'positive', mode: 'uncontrolled' } },
    { type: 'half_missing', score: share(cut, ['full']), confidence: clarity(depth(pos)), halfFault: { polarity: 'negative', mode: 'uncontrolled' } },
  ]
  let best = candidates[0]!
  for (const c of candidates) if (c.score > best.score) best = c
  if (best.score < 0.8) return { type: 'irregular', confidence: clamp(1 - best.score, 0.2, 1) }
  return { type: best.type, confidence: best.score * best.confidence, ...(best.halfFault ? { halfFault: best.halfFault } : {}) }
}

function analyseHarmonics(
  t: Float64Array, v: Float64Array, i: Float64Array | undefined, seg: Segmentation, w0: number, cycles: number,
  frequencyHz: number, sampleRateHz: number, maxHarmonicWanted: number, maxWindows: number,
): HarmonicsResult {
  // Harmonics stay below 0.475·fs, just under Nyquist, where the resampler's gain correction is
  // still well conditioned: h 19 at 2 kS/s and 50 Hz.
  const maxHarmonic = Math.max(1, Math.min(maxHarmonicWanted, Math.floor((0.475 * sampleRateHz) / frequencyHz + 1e-3)))
  const perWindow = Math.min(cycles, Math.max(1, Math.round(0.2 * frequencyHz)))
  const windows = Math.max(1, Math.min(maxWindows, Math.floor(cycles / perWindow)))
  const vPower = new Float64Array(maxHarmonic + 1)
  const iPower = i !== undefined ? new Float64Array(maxHarmonic + 1) : null
  let crossRe = 0
  let crossIm = 0
  let fftSize = 0
  let fft: FFT | null = null
  let spectrum = new Float64Array(0)
  const positions = new Float64Array(64)
  const gain = new Float64Array(maxHarmonic + 1)
  const accumulate = (samples: Float64Array, into: Float64Array): void => {
    fft!.realTransform(spectrum, samples)
    for (let h = 0; h <= maxHarmonic; h++) {
      const bin = h * perWindow
      const amp = ((h === 0 ? 1 : 2) * Math.hypot(spectrum[2 * bin]!, spectrum[2 * bin + 1]!)) / fftSize / gain[h]!
      into[h]! += amp * amp
    }
  }
  for (let w = 0; w < windows; w++) {
    const first = w0 + 2 * perWindow * w
    const start = seg.start[first]!
    const end = seg.end[first + 2 * perWindow - 1]!
    // The interpolator leaves images of the spectrum around fs; on a grid slower than ≈ 2 fs
    // they fold back among the harmonics once those reach a few per cent of fs, so such captures
    // are resampled onto at least twice as many points (3 % error at h 40 and 5 kS/s becomes 0.2 %).
    const span = (end - start) * sampleRateHz
    const reach = (maxHarmonic * frequencyHz) / sampleRateHz
    const size = Math.max(64, nextPow2(Math.ceil(reach > 0.05 ? 2 * span : span + maxHarmonic * perWindow)))
    if (size !== fftSize) {
      fftSize = size
      fft = fftOfSize(size)
      spectrum = new Float64Array(2 * size)
    }
    positions.fill(0)
    const resampled = resampleWindow(t, v, start, end, size, positions)
    for (let h = 0; h <= maxHarmonic; h++) gain[h] = interpolationGain((2 * Math.PI * h * frequencyHz) / sampleRateHz, positions)
    accumulate(resampled, vPower)
    const v1re = spectrum[2 * perWindow]!
    const v1im = spectrum[2 * perWindow + 1]!
    if (i !== undefined && iPower !== null) {
      accumulate(resampleWindow(t, i, start, end, size), iPower)
      const i1re = spectrum[2 * perWindow]!
      const i1im = spectrum[2 * perWindow + 1]!
      crossRe += v1re * i1re + v1im * i1im
      crossIm += v1im * i1re - v1re * i1im
    }
  }
  const spectrumOf = (power: Float64Array): HarmonicSpectrum => {
    const amplitudes = Array.from(power, p => Math.sqrt(p / windows))
    let distortion = 0
    for (let h = 2; h <= maxHarmonic; h++) distortion += amplitudes[h]! ** 2
    const fundamental = amplitudes[1]!
    return { amplitudes, thd: fundamental > 0 ? Math.sqrt(distortion) / fundamental : null }
  }
  const result: HarmonicsResult = {
    cyclesPerWindow: perWindow,
    windows,
    cycles: perWindow * windows,
    maxHarmonic,
    binHz: frequencyHz / perWindow,
    fftSize,
    voltage: spectrumOf(vPower),
  }
  if (iPower !== null) {
    result.current = spectrumOf(iPower)
    const magnitude = Math.hypot(crossRe, crossIm)
    result.displacementFactor = magnitude > 0 ? crossRe / magnitude : null
  }
  return result
}

function deadResult(
  capture: CaptureSamples, sampleRateHz: number, durationS: number, peak: number, deadBelowV: number, noMains: string | null,
): WaveformAnalysis {
  const { v, i } = capture
  const n = v.length
  let sum = 0
  let sum2 = 0
  let vpk = 0
  let si2 = 0
  let svi = 0
  for (let k = 0; k < n; k++) {
    const x = v[k]!
    sum += x
    sum2 += x * x
    const ax = Math.abs(x)
    if (ax > vpk) vpk = ax
    if (i !== undefined) {
      si2 += i[k]! * i[k]!
      svi += x * i[k]!
    }
  }
  const vrms = Math.sqrt(sum2 / n)
  const features: WaveformFeatures = {
    frequencyHz: null,
    vpk,
    vrms,
    halfCycleRms: { positive: vrms, negative: vrms },
    asymmetry: 0,
    conductionAngleDeg: { positive: 0, negative: 0 },
    cutType: 'none',
    dcOffset: sum / n,
    crestFactor: vrms > 0 ? vpk / vrms : null,
    thd: null,
    samples: n,
    cycles: 0,
    dead: true,
    supplyVrms: null,
  }
  if (i !== undefined) {
    const irms = Math.sqrt(si2 / n)
    const p = svi / n
    features.current = { irms, realPowerW: p, powerFactor: irms > 0 && vrms > 0 ? p / (vrms * irms) : null, thd: null, supplyPowerFactor: null }
  }
  const stats = (): PolarityStats => ({ halfCycles: 0, medianDeg: 0, minDeg: 0, maxDeg: 0, shapes: emptyShapes(), switchOnDeg: null, switchOffDeg: null })
  return {
    features,
    sampleRateHz,
    durationS,
    frequency: { hz: null, cycles: 0, crossings: 0, spreadHz: null, uncertaintyHz: null, confidence: 0 },
    window: { start: capture.t[0]!, end: capture.t[n - 1]!, cycles: 0, samples: n },
    cut: { type: 'none', confidence: noMains === null ? clamp(1 - peak / deadBelowV, 0.5, 1) : 0.5, cycles: 0, positive: stats(), negative: stats() },
    supply: null,
    harmonics: null,
    halfCycles: [],
    halfCyclesTotal: 0,
    cutPoints: [],
    cutPointsTotal: 0,
    warnings: [
      noMains === null
        ? `no voltage at the load: the peak of ${peak.toFixed(2)} V is below ${deadBelowV} V`
        : `no voltage at the load: ${noMains}, and the ${features.vrms.toFixed(1)} V RMS that is there reads as noise`,
    ],
  }
}

// ---------------------------------------------------------------------------------------------

export function analyseWaveform(capture: CaptureSamples, options: AnalyseOptions = {}): WaveformAnalysis {
  const { t, v, i } = capture
  const n = v.length
  const minRate = options.minSampleRateHz ?? MIN_SAMPLE_RATE_HZ
  const deadBelowV = options.deadBelowV ?? DEAD_BELOW_V
  const [fLow, fHigh] = options.mainsRangeHz ?? [40, 70]
  const warnings: string[] = []

  if (t.length !== n || (i !== undefined && i.length !== n)) {
    throw new WaveformError('INVALID_INPUT', 'time, voltage and current channels must have the same number of samples')
  }
  if (n < 3) throw new WaveformError('TOO_FEW_CYCLES', `the capture has only ${n} sample${n === 1 ? '' : 's'}; at least two mains cycles are needed`)
  const { vmin, vmax, jitter, evenGrid } = checkSamples(t, v, i)
  const durationS = t[n - 1]! - t[0]!
  const sampleRateHz = (n - 1) / durationS
  const dt = 1 / sampleRateHz
  if (sampleRateHz < minRate) {
    throw new WaveformError(
      'SAMPLE_RATE_TOO_LOW',
      `the capture is sampled at ${Math.round(sampleRateHz)} S/s; at least ${minRate / 1000} kS/s is needed (40 samples per 50 Hz cycle, harmonics up to h 19)`,
    )
  }
  if (!evenGrid && jitter > 0.01) warnings.push(`the sampling interval varies by up to ${(100 * jitter).toFixed(0)} %; RMS and power assume even sampling`)

  const { q001, q999, baseline, offStateNoise } = measureLevels(v, vmin, vmax)
  // Dead means no voltage at all: a constant 48 V is a live (if odd) capture, not a dead load.
  const peakAbs = Math.max(Math.abs(q999), Math.abs(q001))
  if (peakAbs < deadBelowV) return deadResult(capture, sampleRateHz, durationS, peakAbs, deadBelowV, null)
  const peakAmp = Math.max(q999 - baseline, baseline - q001)
  // Noise or interference on a dead output has no mains period to lock onto; below 12 V RMS
  // that is a dead load seen through a noisy probe, above it a capture Benchlore cannot read.
  const deadIfQuiet = (error: WaveformError): WaveformAnalysis => {
    let sum2 = 0
    for (let k = 0; k < n; k++) sum2 += v[k]! * v[k]!
    if (Math.sqrt(sum2 / n) < NOISE_ONLY_BELOW_VRMS) return deadResult(capture, sampleRateHz, durationS, peakAbs, deadBelowV, error.message)
    throw error
  }

  // Crossings of the level midway between the extremes, so that a capture with one polarity
  // missing still crosses it once per half-cycle of the remaining one. The band clears the
  // off-state noise too, or noise on a long flat stretch would fire it.
  const halfRange = (q999 - q001) / 2
  const band = Math.min(0.6 * halfRange, Math.max(0.15 * halfRange, 5 * offStateNoise))
  const { rising, falling } = findCrossings(t, v, (q999 + q001) / 2, band)
  const crossings = fitCrossings([rising, falling], dt)
  if (crossings === null) {
    if (rising.length + falling.length === 0) {
      return deadIfQuiet(new WaveformError('NO_MAINS_FREQUENCY', 'no mains frequency found: the voltage never crosses zero'))
    }
    throw new WaveformError(
      'TOO_FEW_CYCLES',
      `the capture spans about one mains cycle or less (${(durationS * 1000).toFixed(1)} ms); at least two whole cycles are needed`,
    )
  }
  const roughPeriod = crossings.period
  const roughHz = 1 / roughPeriod
  if (!(roughHz >= fLow && roughHz <= fHigh)) {
    return deadIfQuiet(new WaveformError(
      'NO_MAINS_FREQUENCY',
      `no mains frequency found: the waveform repeats at ${roughHz.toFixed(2)} Hz, outside the ${fLow}–${fHigh} Hz mains range`,
    ))
  }
  if (durationS + dt < 2 * roughPeriod * (1 - 1e-3)) {
    throw new WaveformError(
      'TOO_FEW_CYCLES',
      `the capture holds ${((durationS + dt) / roughPeriod).toFixed(2)} cycles at ${roughHz.toFixed(2)} Hz; at least two whole cycles are needed`,
    )
  }

  const t0 = crossings.reference
  // Conducting samples stand clear of the off-state: above a tenth of the peak and of its noise.
  const present = Math.max(0.1 * peakAmp, 5 * offStateNoise)
  let fit = fitSupply(t, v, baseline, present, t0, roughPeriod, evenGrid)
  if (fit === null) {
    const error = new WaveformError('NO_MAINS_FREQUENCY', 'no mains frequency found: too little of the waveform follows a sine to lock onto the supply')
    // Crossings that disagree among themselves are noise; consistent ones are a real, if sparse, waveform.
    if (crossings.crossings < 0.8 * crossings.total) return deadIfQuiet(error)
    throw error
  }
  // The frames' own phases drift by what the crossing-based period got wrong. The correction is
  // taken when it is the better determined of the two; where it exceeds a tenth of a degree per
  // cycle, the supply is fitted again on the corrected period so the frames line up.
  // A crossing at a jump carries no timing below one sample: whatever the scatter says, the
  // crossing-based frequency is no better than dt/√12 spread over the periods it spans (sampling
  // locked close to the mains would otherwise pass the sample grid's rate off as the mains').
  const quantisation = dt / Math.sqrt(12) / (Math.max(1, crossings.spanCycles) * roughPeriod * roughPeriod)
  const roughUncertainty = Math.max(crossings.uncertaintyHz ?? 0, quantisation)
  const phaseUncertainty = (f: SupplyFit): number => (f.phaseSlopeSe === null ? Infinity : f.phaseSlopeSe / (2 * Math.PI * f.period))
  const usePhase = (f: SupplyFit): boolean => f.phaseSlope !== null && phaseUncertainty(f) < roughUncertainty
  if (usePhase(fit) && Math.abs(fit.phaseSlope!) > 1.7e-3) {
    const again = fitSupply(t, v, baseline, present, t0, roughPeriod / (1 + fit.phaseSlope! / (2 * Math.PI)), evenGrid)
    if (again !== null) fit = again
  }
  // Segmentation works in the fit's own frame; the reported frequency adds the remaining drift.
  const omega = (2 * Math.PI) / fit.period
  const refined = usePhase(fit) || fit.period !== roughPeriod
  const period = usePhase(fit) ? fit.period / (1 + fit.phaseSlope! / (2 * Math.PI)) : fit.period
  const frequencyHz = 1 / period
  const followsSine = fit.noiseV < 0.2 * fit.vpk
  if (!followsSine) warnings.push(`the voltage does not follow a sine where present (residual ${((100 * fit.noiseV) / fit.vpk).toFixed(0)} % of peak)`)

  const seg = segmentHalfCycles(t, v, i, fit, fit.baseline, t0, omega, evenGrid, options.maxCutPoints ?? 2000)

  // Whole-cycle window: an even number of consecutive complete half-cycles, from the first
  // complete one of either polarity. A half-cycle is complete when no sample of it can lie
  // outside the capture.
  const firstT = t[0]!
  const lastT = t[n - 1]!
  const complete = (h: number): boolean => seg.start[h]! >= firstT - 1.01 * dt && seg.end[h]! <= lastT + 1.01 * dt && seg.count[h]! > 0
  let w0 = 0
  while (w0 < seg.halves && !complete(w0)) w0++
  let w1 = w0
  while (w1 < seg.halves && complete(w1)) w1++
  const cycles = Math.floor((w1 - w0) / 2)
  if (cycles < 2) {
    throw new WaveformError(
      'TOO_FEW_CYCLES',
      `the capture holds ${cycles} whole mains cycle${cycles === 1 ? '' : 's'} at ${frequencyHz.toFixed(2)} Hz; at least two are needed`,
    )
  }
  w1 = w0 + 2 * cycles

  let count = 0
  let sumV = 0
  let sumV2 = 0
  let vpk = 0
  let sumI2 = 0
  let sumVI = 0
  const accumulators: [PolarityAccumulator, PolarityAccumulator] = [
    { count: 0, sum2: 0, conduction: [], on: [], off: [], shapes: emptyShapes() },
    { count: 0, sum2: 0, conduction: [], on: [], off: [], shapes: emptyShapes() },
  ]
  for (let h = w0; h < w1; h++) {
    count += seg.count[h]!
    sumV += seg.sum[h]!
    sumV2 += seg.sum2[h]!
    vpk = Math.max(vpk, Math.abs(seg.max[h]!), Math.abs(seg.min[h]!))
    if (seg.i2 !== null && seg.vi !== null) {
      sumI2 += seg.i2[h]!
      sumVI += seg.vi[h]!
    }
    const p = accumulators[seg.positive[h] === 1 ? 0 : 1]
    p.count += (seg.end[h]! - seg.start[h]!) / dt
    p.sum2 += seg.sum2[h]!
    p.conduction.push(seg.conduction[h]!)
    const shape = seg.shape[h]!
    p.shapes[HALF_CYCLE_SHAPES[shape]!]++
    if (shape === SHAPE_LEADING) p.on.push(seg.on[h]!)
    if (shape === SHAPE_TRAILING) p.off.push(seg.off[h]!)
  }
  // Sums are normalised by duration (in sample intervals), not by sample count: a sample that
  // falls exactly on a zero crossing belongs to either half-cycle, and counting it would skew a
  // half-cycle's RMS by one sample in forty at 2 kS/s. It carries ~0 V, so its sum is the same.
  const windowSpan = (seg.end[w1 - 1]! - seg.start[w0]!) / dt
  const vrms = Math.sqrt(sumV2 / windowSpan)
  const rmsPos = Math.sqrt(accumulators[0].sum2 / accumulators[0].count)
  const rmsNeg = Math.sqrt(accumulators[1].sum2 / accumulators[1].count)
  const positive = polarityStats(accumulators[0])
  const negative = polarityStats(accumulators[1])

  const guardDeg = Math.asin(clamp(median(fit.guard) / fit.vpk, 0, 1)) * DEG
  let verdict = classifyCut(positive, negative, guardDeg)
  if (!followsSine) verdict = { type: 'irregular', confidence: clamp(0.5 + (fit.noiseV / fit.vpk - 0.2) / 0.4, 0.5, 1) }

  const harmonics = analyseHarmonics(
    t, v, i, seg, w0, cycles, frequencyHz, sampleRateHz, options.maxHarmonic ?? DEFAULT_MAX_HARMONIC, options.maxHarmonicWindows ?? 15,
  )
  const supplyVrms = fit.vpk / Math.SQRT2
  const features: WaveformFeatures = {
    frequencyHz,
    vpk,
    vrms,
    halfCycleRms: { positive: rmsPos, negative: rmsNeg },
    asymmetry: rmsPos + rmsNeg > 0 ? (rmsPos - rmsNeg) / (rmsPos + rmsNeg) : 0,
    conductionAngleDeg: { positive: positive.medianDeg, negative: negative.medianDeg },
    cutType: verdict.type,
    dcOffset: sumV / windowSpan,
    crestFactor: vrms > 0 ? vpk / vrms : null,
    thd: harmonics.voltage.thd,
    samples: n,
    cycles,
    dead: false,
    supplyVrms,
  }
  if (i !== undefined && harmonics.current !== undefined) {
    const irms = Math.sqrt(sumI2 / windowSpan)
    const realPowerW = sumVI / windowSpan
    // An open load's current holds no fundamental to speak of, so its THD would be noise over noise.
    if (!(harmonics.current.amplitudes[1]! > 0.01 * irms)) {
      harmonics.current.thd = null
      harmonics.displacementFactor = null
    }
    features.current = {
      irms,
      realPowerW,
      powerFactor: irms > 0 && vrms > 0 ? realPowerW / (vrms * irms) : null,
      thd: harmonics.current.thd,
      supplyPowerFactor: irms > 0 ? realPowerW / (supplyVrms * irms) : null,
    }
  }

  const maxDetails = options.maxHalfCycleDetails ?? 4000
  const halfCycles: HalfCycleDetail[] = []
  for (let h = 0; h < seg.halves && halfCycles.length < maxDetails; h++) {
    const c = seg.count[h]!
    halfCycles.push({
      index: h,
      polarity: seg.positive[h] === 1 ? 'positive' : 'negative',
      start: seg.start[h]!,
      end: seg.end[h]!,
      inWindow: h >= w0 && h < w1,
      rms: c > 0 ? Math.sqrt((seg.sum2[h]! * dt) / (seg.end[h]! - seg.start[h]!)) : 0,
      peak: Math.abs(seg.max[h]!) >= Math.abs(seg.min[h]!) ? seg.max[h]! : seg.min[h]!,
      conductionDeg: seg.conduction[h]!,
      shape: HALF_CYCLE_SHAPES[seg.shape[h]!]!,
      switchOnDeg: Number.isNaN(seg.on[h]!) ? null : seg.on[h]!,
      switchOffDeg: Number.isNaN(seg.off[h]!) ? null : seg.off[h]!,
    })
  }
  if (crossings.crossings < crossings.total) {
    warnings.push(`${crossings.total - crossings.crossings} of ${crossings.total} zero crossings did not fit the mains period and were ignored`)
  }

  const uncertaintyHz = refined && Number.isFinite(phaseUncertainty(fit)) ? phaseUncertainty(fit) : roughUncertainty
  const uncertainty = uncertaintyHz ?? dt * frequencyHz * frequencyHz
  return {
    features,
    sampleRateHz,
    durationS,
    frequency: {
      hz: frequencyHz,
      cycles: crossings.spanCycles,
      crossings: crossings.crossings,
      spreadHz: crossings.spreadHz,
      uncertaintyHz,
      confidence: crossings.crossings / crossings.total / (1 + (uncertainty / 0.05) ** 2),
    },
    window: { start: seg.start[w0]!, end: seg.end[w1 - 1]!, cycles, samples: count },
    cut: {
      type: verdict.type,
      confidence: verdict.confidence,
      cycles,
      ...(verdict.halfFault ? { halfFault: verdict.halfFault } : {}),
      positive,
      negative,
    },
    supply: { vpk: fit.vpk, vrms: supplyVrms, noiseV: fit.noiseV, followsSine },
    harmonics,
    halfCycles,
    halfCyclesTotal: seg.halves,
    cutPoints: seg.cutPoints,
    cutPointsTotal: seg.cutPointsTotal,
    warnings,
  }
}
