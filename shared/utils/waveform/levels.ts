/**
 * Levels and crossings: the first passes over the samples.
 *
 * Levels come from a histogram (0.1 % / 99.9 % quantiles), so a few spikes do not move them. The
 * off-state level (the "baseline": where the load sits while the switch is open, and where a
 * probe offset shows) is the histogram's spike near 0 V when there is one.
 *
 * Zero crossings come from a Schmitt trigger centred between the quantiles, with a band of ±15 %
 * of the half-range (wider where the off-state noise needs it). Centring between the extremes
 * rather than at 0 V keeps it working when one polarity is absent. Each crossing is interpolated
 * where the signal passes the threshold that fired (not the centre, which a flat noisy off-state
 * crosses anywhere). The period is the slope of crossing time against cycle number, fitted with
 * one intercept per direction over the crossings that agree with the median period: robust to
 * stray crossings.
 *
 * Each pass is its own function so that its loop keeps its state in locals.
 */
import { median } from './math'
import { WaveformError } from './types'

export interface SampleCheck {
  vmin: number
  vmax: number
  /** Largest relative deviation of one sampling interval from the mean interval. */
  jitter: number
  /**
   * The time stamps stay within a quarter interval of an even grid: the sampling is even and any
   * jitter is rounding in the exported time column (7 digits over 10 s is 1 µs).
   */
  evenGrid: boolean
  /** Set when samples are missing from an otherwise even grid (rows the file left out). */
  gaps: SampleGaps | null
}

export interface SampleGaps {
  /** The grid's sampling interval. */
  step: number
  /** Samples missing from the grid, and in how many gaps. */
  missing: number
  gaps: number
  /** The longest gap: missing samples, and the time of the last sample before it. */
  longest: number
  longestAt: number
}

/**
 * Looks for an even grid with holes: every time stamp within a quarter step of start + m·step.
 * The step is the median of (up to 4096) intervals, refined over the whole span. Null when the
 * stamps follow no such grid (uneven sampling) or none is missing.
 */
function findGaps(t: Float64Array): SampleGaps | null {
  const n = t.length
  const stride = Math.max(1, Math.floor((n - 1) / 4096))
  const intervals: number[] = []
  for (let k = 1; k < n; k += stride) intervals.push(t[k]! - t[k - 1]!)
  const t0 = t[0]!
  const rough = median(intervals)
  const span = Math.round((t[n - 1]! - t0) / rough)
  if (!(rough > 0) || span <= n - 1) return null
  const step = (t[n - 1]! - t0) / span
  const gaps: SampleGaps = { step, missing: 0, gaps: 0, longest: 0, longestAt: t0 }
  let previous = 0
  for (let k = 1; k < n; k++) {
    const m = Math.round((t[k]! - t0) / step)
    if (m <= previous || Math.abs(t[k]! - t0 - m * step) > 0.25 * step) return null
    const hole = m - previous - 1
    if (hole > 0) {
      gaps.missing += hole
      gaps.gaps++
      if (hole > gaps.longest) {
        gaps.longest = hole
        gaps.longestAt = t[k - 1]!
      }
    }
    previous = m
  }
  return gaps.missing > 0 ? gaps : null
}

export function checkSamples(t: Float64Array, v: Float64Array, i: Float64Array | undefined): SampleCheck {
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
  const evenGrid = gridDeviation < 0.25 * mean
  // Intervals of two or more steps on an uneven grid are usually rows left out of the file.
  const gaps = !evenGrid && dtMax > 1.5 * dtMin ? findGaps(t) : null
  return { vmin, vmax, jitter: Math.max(dtMax - mean, mean - dtMin) / mean, evenGrid, gaps }
}

export interface Levels {
  q001: number
  q999: number
  /** Off-state level: where the load voltage sits while the switch is open (a probe offset shows here). */
  baseline: number
  /** Noise on the off-state level (σ from the spike's half-maximum width); 0 when there is no off-state. */
  offStateNoise: number
}

/** Robust extremes from a histogram, and the off-state baseline as the mean of the samples near zero. */
export function measureLevels(v: Float64Array, vmin: number, vmax: number): Levels {
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
    // The top bin holds the maximum itself (the histogram put it there): when the off-state is
    // the capture's highest level (one polarity absent, 0 V the maximum), its samples sit exactly
    // on `to` and must count.
    const top = hi === BINS - 1 ? vmax : Number.NEGATIVE_INFINITY
    let w = 0
    let s = 0
    for (let k = 0; k < n; k++) {
      const x = v[k]!
      if (x >= from && (x < to || x <= top)) {
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
export function findCrossings(t: Float64Array, v: Float64Array, centre: number, band: number): { rising: number[], falling: number[] } {
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

export interface EventFit {
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
export function fitCrossings(groups: number[][], dt: number): EventFit | null {
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
