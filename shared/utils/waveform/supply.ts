/**
 * The supply fit. Phase-cut waveforms are the supply sine switched on and off, so wherever voltage
 * reaches the load it follows the supply. A least-squares fit of a·sin ωt + b·cos ωt to those
 * samples only, pooled over 5 cycles so slow drift of the mains frequency is followed, gives the
 * supply's amplitude and phase. Three refits drop samples far from the previous fit (soft edges,
 * capacitive tails) and move the baseline by the mean residual (an offset with no flat off-state
 * to show it). The drift of each cycle's own fitted phase then corrects the period: that
 * measures frequency over every conducting sample, not over a few crossings. The supply's zero
 * crossings split the capture into half-cycles, even where the load sits flat at 0 V.
 */
import { median, Phasor } from './math'

/**
 * The supply sine, fitted frame by frame (frame c = one period from the crossing reference) over
 * the samples where voltage reaches the load. Each frame's fit pools the 5 frames around it.
 */
export interface SupplyFit {
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

/** A fit with its frames laid out from the crossing reference t0 and nothing solved yet. */
function newSupplyFit(t: Float64Array, baseline: number, t0: number, period: number): SupplyFit {
  const n = t.length
  const frameBase = Math.floor((t[0]! - t0) / period)
  const frames = Math.floor((t[n - 1]! - t0) / period) - frameBase + 1
  return {
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
}

/**
 * The samples standing clear of the off-state by more than `present`. About 500 samples per cycle
 * pin two parameters per frame as well as thousands would, at a fraction of the cost: the fit
 * uses every `stride`-th sample where voltage reaches the load.
 */
function collectFitSamples(t: Float64Array, v: Float64Array, fit: SupplyFit, present: number, t0: number, evenlySampled: boolean): FitSamples {
  const n = v.length
  const { period, frames, baseline } = fit
  const perCycle = (period * (n - 1)) / (t[n - 1]! - t[0]!)
  const stride = Math.max(1, Math.floor(perCycle / 500))
  const room = Math.ceil(n / stride)
  const samples: FitSamples = { count: 0, frame: new Int32Array(room), s: new Float64Array(room), c: new Float64Array(room), x: new Float64Array(room) }
  const phasor = new Phasor(t, (2 * Math.PI) / period, t0, evenlySampled, stride)
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
  return samples
}

/** Frames that lie wholly inside the capture (to within a sample). */
function wholeFrames(t: Float64Array, fit: SupplyFit): Uint8Array {
  const n = t.length
  const whole = new Uint8Array(fit.frames)
  const dt = (t[n - 1]! - t[0]!) / (n - 1)
  for (let g = 0; g < fit.frames; g++) {
    const start = fit.frameStart + g * fit.period
    whole[g] = start >= t[0]! - dt && start + fit.period <= t[n - 1]! + dt ? 1 : 0
  }
  return whole
}

/**
 * A probe offset shifts the conducting parts off the histogram's baseline when there is no flat
 * off-state to anchor it (a full sine): each round moves the baseline by the fit's mean residual.
 * Soft edges and capacitive tails pull a least-squares fit off too: each round refits over the
 * samples near the previous fit, with a tolerance that tightens as the noise drops. Returns the
 * robust noise around the final fit.
 */
function refineFit(samples: FitSamples, fit: SupplyFit, whole: Uint8Array, sums: Float64Array): number {
  const { frames } = fit
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
  return noiseV
}

/**
 * Phase of each whole frame on its own, with its weight (the inverse of its variance from its
 * normal equations, σ²·(b²·Caa + a²·Cbb − 2ab·Cab)/A⁴). A wide tolerance here, dropping only gross
 * outliers (spikes): what a tight one drops (distortion peaks, edge samples) varies from frame to
 * frame with the sample grid, while the samples themselves repeat each cycle and so shift every
 * frame's phase alike.
 */
function framePhases(samples: FitSamples, fit: SupplyFit, whole: Uint8Array, sums: Float64Array, noiseV: number): { phases: number[], indices: number[], weights: number[] } {
  const { frames } = fit
  const tol = new Float64Array(frames)
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
  return { phases, indices, weights }
}

/**
 * Weighted slope of phase against frame number, and its standard error. The variances give the
 * slope's error if the phases scatter as the noise says; more scatter than that (drift that is
 * not linear, distortion) shows in the residuals.
 */
function phaseDrift({ phases, indices, weights }: { phases: number[], indices: number[], weights: number[] }): { slope: number, se: number } | null {
  const m = phases.length
  if (m < 2) return null
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
  let se = Math.sqrt(1 / sxx)
  if (m > 2) {
    let chi2 = 0
    for (let j = 0; j < m; j++) chi2 += weights[j]! * (phases[j]! - pb - slope * (indices[j]! - gb)) ** 2
    se = Math.max(se, Math.sqrt(chi2 / (m - 2) / sxx))
  }
  return { slope, se }
}

/**
 * Fits the supply sine over the samples that stand clear of the off-state by more than
 * `present`, frame by frame on the given period; null when too few samples follow a sine.
 */
export function fitSupply(
  t: Float64Array, v: Float64Array, baseline: number, present: number, t0: number, period: number, evenlySampled: boolean,
): SupplyFit | null {
  const fit = newSupplyFit(t, baseline, t0, period)
  const { frames } = fit
  const samples = collectFitSamples(t, v, fit, present, t0, evenlySampled)
  const whole = wholeFrames(t, fit)
  const sums = new Float64Array(frames * 6)
  accumulateFit(samples, fit, null, sums)
  if (!solveFrames(sums, frames, whole, fit.a, fit.b)) return null
  const noiseV = refineFit(samples, fit, whole, sums)
  fit.noiseV = noiseV
  // The drift of the whole frames' own phases is the error of the crossing-based frequency,
  // measured over every conducting sample rather than a few crossings.
  const drift = phaseDrift(framePhases(samples, fit, whole, sums, noiseV))
  if (drift !== null) {
    fit.phaseSlope = drift.slope
    fit.phaseSlopeSe = drift.se
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
