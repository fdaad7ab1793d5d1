/**
 * Segmentation into half-cycles. In each half-cycle the ratio q = v/supply is ≈ 1 while the
 * switch conducts and ≈ 0 while it is open. Edges are where q crosses ½ (hysteresis 0.35/0.65,
 * interpolated): for a soft edge, where the load carries half the supply. Near the zero crossings
 * q is undefined, so a guard zone of |supply| < max(10 % of peak, 8 σ noise) takes the state of
 * the nearest determined sample. A cut shorter than that guard (about 6° on a clean capture)
 * reads as no cut, and a conduction shorter than it as none.
 */
import { clamp, Phasor } from './math'
import type { SupplyFit } from './supply'
import { WaveformError, type CutPoint } from './types'

/** Half-cycle shapes as stored in `Segmentation.shape`: indices into HALF_CYCLE_SHAPES. */
export const SHAPE_FULL = 0
export const SHAPE_LEADING = 1
export const SHAPE_TRAILING = 2
export const SHAPE_BOTH = 3
export const SHAPE_ABSENT = 4
export const SHAPE_ERRATIC = 5

/** Per half-cycle results, in capture order. */
export interface Segmentation {
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

function newSegmentation(cap: number, withCurrent: boolean, maxCutPoints: number): Segmentation {
  return {
    halves: 0,
    start: new Float64Array(cap),
    end: new Float64Array(cap),
    positive: new Uint8Array(cap),
    count: new Float64Array(cap),
    sum: new Float64Array(cap),
    sum2: new Float64Array(cap),
    max: new Float64Array(cap).fill(-Infinity),
    min: new Float64Array(cap).fill(Infinity),
    i2: withCurrent ? new Float64Array(cap) : null,
    vi: withCurrent ? new Float64Array(cap) : null,
    conduction: new Float64Array(cap),
    shape: new Uint8Array(cap),
    on: new Float64Array(cap),
    off: new Float64Array(cap),
    cutPoints: [],
    cutPointsTotal: 0,
    maxCutPoints,
  }
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
export function segmentHalfCycles(
  t: Float64Array, v: Float64Array, i: Float64Array | undefined, fit: SupplyFit, baseline: number, t0: number, omega: number,
  evenlySampled: boolean, maxCutPoints: number,
): Segmentation {
  const n = v.length
  const seg = newSegmentation(2 * fit.frames + 4, i !== undefined, maxCutPoints)
  const cap = seg.start.length
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
