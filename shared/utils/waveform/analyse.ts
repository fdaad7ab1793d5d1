/**
 * Analysis of a mains capture taken across a load: frequency, RMS and peak, each half-cycle's
 * RMS and conduction angle, the kind of phase cut, DC offset, crest factor, THD and, with a
 * current channel, power and power factor.
 *
 * The stages, each in its own module with the reasons behind it:
 * 1. Levels and crossings (`levels.ts`): robust extremes and the off-state level from a
 *    histogram; Schmitt-trigger zero crossings; the period fitted to them.
 * 2. The supply fit (`supply.ts`): the supply sine fitted to the samples where voltage reaches
 *    the load, cycle by cycle; the drift of its phase refines the frequency.
 * 3. Segmentation (`segment.ts`): the supply's zero crossings split the capture into
 *    half-cycles; in each, v/supply tells conduction from cut and places the switching edges.
 *    The cut type follows from the half-cycles' shapes (`cut.ts`).
 * 4. RMS, mean, power and the harmonic windows use whole cycles between supply zero crossings,
 *    where the load voltage is ~0, so the sums have no boundary error to speak of.
 * 5. Harmonics and THD (`harmonics.ts`): IEC 61000-4-7 windows, resampled and transformed.
 *
 * A dead unit is a result, not an error: `dead: true`, cutType 'none', conduction 0°, frequency
 * null, cycles 0, and RMS values over the whole capture. Dead means |v| stays below `deadBelowV`
 * (5 V by default), or no mains period can be found and the RMS is below 12 V (noise or
 * interference on a dead output). A constant 48 V is no dead load: it fails with no mains
 * frequency.
 */
import { classifyCut, emptyShapes, halfCycleEvents, polarityStats, type PolarityAccumulator } from './cut'
import { analyseHarmonics } from './harmonics'
import { checkSamples, findCrossings, fitCrossings, measureLevels, type EventFit, type Levels } from './levels'
import { clamp, DEG, median } from './math'
import { segmentHalfCycles, SHAPE_LEADING, SHAPE_TRAILING, type Segmentation } from './segment'
import { fitSupply, type SupplyFit } from './supply'
import {
  DEAD_BELOW_V, DEFAULT_MAX_HARMONIC, HALF_CYCLE_SHAPES, MIN_SAMPLE_RATE_HZ, NOISE_ONLY_BELOW_VRMS, WaveformError,
  type AnalyseOptions, type CaptureSamples, type HalfCycleDetail, type HalfCycleEvent, type PolarityStats, type WaveformAnalysis, type WaveformFeatures,
} from './types'

export * from './types'
export { amplitudeSpectrum, interpolationGain, resampleWindow } from './harmonics'

/** What every stage needs to know about the capture as a whole. */
interface Context {
  capture: CaptureSamples
  n: number
  durationS: number
  sampleRateHz: number
  dt: number
  evenGrid: boolean
  /**
   * Samples are missing from the grid: sums are averaged over the samples present rather than
   * over the time they span, which would count each missing sample as 0 V.
   */
  byCount: boolean
  deadBelowV: number
  /** Largest robust excursion from 0 V. */
  peakAbs: number
  warnings: string[]
}

/** The time axis and sample rate, checked; refuses captures the analysis cannot use. */
function checkCapture(capture: CaptureSamples, options: AnalyseOptions, warnings: string[]): Omit<Context, 'peakAbs' | 'warnings'> & { vmin: number, vmax: number } {
  const { t, v, i } = capture
  const n = v.length
  const minRate = options.minSampleRateHz ?? MIN_SAMPLE_RATE_HZ
  if (t.length !== n || (i !== undefined && i.length !== n)) {
    throw new WaveformError('INVALID_INPUT', 'time, voltage and current channels must have the same number of samples')
  }
  if (n < 3) throw new WaveformError('TOO_FEW_CYCLES', `the capture has only ${n} sample${n === 1 ? '' : 's'}; at least two mains cycles are needed`, 'export the whole record')
  const { vmin, vmax, jitter, evenGrid, gaps } = checkSamples(t, v, i)
  const durationS = t[n - 1]! - t[0]!
  const sampleRateHz = gaps !== null ? 1 / gaps.step : (n - 1) / durationS
  if (sampleRateHz < minRate) {
    throw new WaveformError(
      'SAMPLE_RATE_TOO_LOW',
      `the capture is sampled at ${Math.round(sampleRateHz)} S/s; at least ${minRate / 1000} kS/s is needed (40 samples per 50 Hz cycle, harmonics up to h 19)`,
      'capture again with a higher sample rate or a longer record length',
    )
  }
  if (gaps !== null) {
    const many = (count: number, what: string) => `${count} ${what}${count === 1 ? '' : 's'}`
    warnings.push(
      `${many(gaps.missing, 'sample')} missing from the time axis (${many(gaps.gaps, 'gap')}, the longest ${many(gaps.longest, 'sample')} after ${(gaps.longestAt * 1000).toFixed(2)} ms): `
      + 'the figures are taken over the samples present',
    )
  }
  else if (!evenGrid && jitter > 0.01) warnings.push(`the sampling interval varies by up to ${(100 * jitter).toFixed(0)} %; RMS and power assume even sampling`)
  return {
    capture, n, durationS, sampleRateHz, dt: 1 / sampleRateHz, evenGrid, byCount: gaps !== null, deadBelowV: options.deadBelowV ?? DEAD_BELOW_V, vmin, vmax,
  }
}

/**
 * Noise or interference on a dead output has no mains period to lock onto; below 12 V RMS that
 * is a dead load seen through a noisy probe, above it a capture Benchlore cannot read.
 */
function deadIfQuiet(ctx: Context, error: WaveformError): WaveformAnalysis {
  const { v } = ctx.capture
  let sum2 = 0
  for (let k = 0; k < ctx.n; k++) sum2 += v[k]! * v[k]!
  if (Math.sqrt(sum2 / ctx.n) < NOISE_ONLY_BELOW_VRMS) return deadResult(ctx.capture, ctx.sampleRateHz, ctx.durationS, ctx.peakAbs, ctx.deadBelowV, error.reason)
  throw error
}

/**
 * The mains period from zero crossings of the level midway between the extremes, so that a
 * capture with one polarity missing still crosses it once per half-cycle of the remaining one.
 * The band clears the off-state noise too, or noise on a long flat stretch would fire it.
 */
function findMainsPeriod(ctx: Context, levels: Levels, options: AnalyseOptions): { crossings: EventFit } | { dead: WaveformAnalysis } {
  const { t, v } = ctx.capture
  const { q001, q999, offStateNoise } = levels
  const [fLow, fHigh] = options.mainsRangeHz ?? [40, 70]
  const halfRange = (q999 - q001) / 2
  const band = Math.min(0.6 * halfRange, Math.max(0.15 * halfRange, 5 * offStateNoise))
  const { rising, falling } = findCrossings(t, v, (q999 + q001) / 2, band)
  const crossings = fitCrossings([rising, falling], ctx.dt)
  if (crossings === null) {
    if (rising.length + falling.length === 0) {
      return { dead: deadIfQuiet(ctx, new WaveformError('NO_MAINS_FREQUENCY', 'no mains frequency found: the voltage never crosses zero', 'capture the mains voltage across the load')) }
    }
    throw new WaveformError(
      'TOO_FEW_CYCLES',
      `the capture spans about one mains cycle or less (${(ctx.durationS * 1000).toFixed(1)} ms); at least two whole cycles are needed`,
      'capture a longer stretch (a slower timebase)',
    )
  }
  const roughHz = 1 / crossings.period
  if (!(roughHz >= fLow && roughHz <= fHigh)) {
    return {
      dead: deadIfQuiet(ctx, new WaveformError(
        'NO_MAINS_FREQUENCY',
        `no mains frequency found: the waveform repeats at ${roughHz.toFixed(2)} Hz, outside the ${fLow}–${fHigh} Hz mains range`,
        'capture the mains voltage across the load',
      )),
    }
  }
  if (ctx.durationS + ctx.dt < 2 * crossings.period * (1 - 1e-3)) {
    throw new WaveformError(
      'TOO_FEW_CYCLES',
      `the capture holds ${((ctx.durationS + ctx.dt) / crossings.period).toFixed(2)} cycles at ${roughHz.toFixed(2)} Hz; at least two whole cycles are needed`,
      'capture a longer stretch (a slower timebase)',
    )
  }
  return { crossings }
}

interface Supply {
  fit: SupplyFit
  /** The reported mains period: the fit's, corrected by the remaining phase drift. */
  period: number
  refined: boolean
  uncertaintyHz: number
}

/**
 * The supply fit on the crossing-based period, refined by the drift of the frames' own phases.
 * The correction is taken when it is the better determined of the two; where it exceeds a tenth
 * of a degree per cycle, the supply is fitted again on the corrected period so the frames line up.
 */
function fitMainsSupply(ctx: Context, levels: Levels, crossings: EventFit, present: number): { supply: Supply } | { dead: WaveformAnalysis } {
  const { t, v } = ctx.capture
  const t0 = crossings.reference
  const roughPeriod = crossings.period
  let fit = fitSupply(t, v, levels.baseline, present, t0, roughPeriod, ctx.evenGrid)
  if (fit === null) {
    const error = new WaveformError('NO_MAINS_FREQUENCY', 'no mains frequency found: too little of the waveform follows a sine to lock onto the supply', 'capture the mains voltage across the load')
    // Crossings that disagree among themselves are noise; consistent ones are a real, if sparse, waveform.
    if (crossings.crossings < 0.8 * crossings.total) return { dead: deadIfQuiet(ctx, error) }
    throw error
  }
  // A crossing at a jump carries no timing below one sample: whatever the scatter says, the
  // crossing-based frequency is no better than dt/√12 spread over the periods it spans (sampling
  // locked close to the mains would otherwise pass the sample grid's rate off as the mains').
  const quantisation = ctx.dt / Math.sqrt(12) / (Math.max(1, crossings.spanCycles) * roughPeriod * roughPeriod)
  const roughUncertainty = Math.max(crossings.uncertaintyHz ?? 0, quantisation)
  const phaseUncertainty = (f: SupplyFit): number => (f.phaseSlopeSe === null ? Infinity : f.phaseSlopeSe / (2 * Math.PI * f.period))
  const usePhase = (f: SupplyFit): boolean => f.phaseSlope !== null && phaseUncertainty(f) < roughUncertainty
  if (usePhase(fit) && Math.abs(fit.phaseSlope!) > 1.7e-3) {
    const again = fitSupply(t, v, levels.baseline, present, t0, roughPeriod / (1 + fit.phaseSlope! / (2 * Math.PI)), ctx.evenGrid)
    if (again !== null) fit = again
  }
  const refined = usePhase(fit) || fit.period !== roughPeriod
  const period = usePhase(fit) ? fit.period / (1 + fit.phaseSlope! / (2 * Math.PI)) : fit.period
  const uncertaintyHz = refined && Number.isFinite(phaseUncertainty(fit)) ? phaseUncertainty(fit) : roughUncertainty
  return { supply: { fit, period, refined, uncertaintyHz } }
}

/**
 * Whole-cycle window: an even number of consecutive complete half-cycles, from the first complete
 * one of either polarity. A half-cycle is complete when no sample of it can lie outside the capture.
 */
function wholeCycleWindow(ctx: Context, seg: Segmentation, frequencyHz: number): { w0: number, w1: number, cycles: number } {
  const { t } = ctx.capture
  const firstT = t[0]!
  const lastT = t[ctx.n - 1]!
  const complete = (h: number): boolean => seg.start[h]! >= firstT - 1.01 * ctx.dt && seg.end[h]! <= lastT + 1.01 * ctx.dt && seg.count[h]! > 0
  let w0 = 0
  while (w0 < seg.halves && !complete(w0)) w0++
  let w1 = w0
  while (w1 < seg.halves && complete(w1)) w1++
  const cycles = Math.floor((w1 - w0) / 2)
  if (cycles < 2) {
    throw new WaveformError(
      'TOO_FEW_CYCLES',
      `the capture holds ${cycles} whole mains cycle${cycles === 1 ? '' : 's'} at ${frequencyHz.toFixed(2)} Hz; at least two are needed`,
      'capture a longer stretch (a slower timebase)',
    )
  }
  return { w0, w1: w0 + 2 * cycles, cycles }
}

interface WindowSums {
  count: number
  sumV: number
  sumV2: number
  vpk: number
  sumI2: number
  sumVI: number
  /** Positive, then negative half-cycles. */
  polarity: [PolarityAccumulator, PolarityAccumulator]
}

/** Sums over the whole-cycle window, and each polarity's half-cycles. */
function sumWindow(seg: Segmentation, w0: number, w1: number, dt: number, byCount: boolean): WindowSums {
  const sums: WindowSums = {
    count: 0,
    sumV: 0,
    sumV2: 0,
    vpk: 0,
    sumI2: 0,
    sumVI: 0,
    polarity: [
      { count: 0, sum2: 0, conduction: [], on: [], off: [], shapes: emptyShapes() },
      { count: 0, sum2: 0, conduction: [], on: [], off: [], shapes: emptyShapes() },
    ],
  }
  for (let h = w0; h < w1; h++) {
    sums.count += seg.count[h]!
    sums.sumV += seg.sum[h]!
    sums.sumV2 += seg.sum2[h]!
    sums.vpk = Math.max(sums.vpk, Math.abs(seg.max[h]!), Math.abs(seg.min[h]!))
    if (seg.i2 !== null && seg.vi !== null) {
      sums.sumI2 += seg.i2[h]!
      sums.sumVI += seg.vi[h]!
    }
    const p = sums.polarity[seg.positive[h] === 1 ? 0 : 1]
    p.count += byCount ? seg.count[h]! : (seg.end[h]! - seg.start[h]!) / dt
    p.sum2 += seg.sum2[h]!
    p.conduction.push(seg.conduction[h]!)
    const shape = seg.shape[h]!
    p.shapes[HALF_CYCLE_SHAPES[shape]!]++
    if (shape === SHAPE_LEADING) p.on.push(seg.on[h]!)
    if (shape === SHAPE_TRAILING) p.off.push(seg.off[h]!)
  }
  return sums
}

/** Every half-cycle (up to `maxDetails`) as the plot shows it. */
function halfCycleDetails(seg: Segmentation, w0: number, w1: number, dt: number, byCount: boolean, maxDetails: number): HalfCycleDetail[] {
  const halfCycles: HalfCycleDetail[] = []
  for (let h = 0; h < seg.halves && halfCycles.length < maxDetails; h++) {
    const c = seg.count[h]!
    halfCycles.push({
      index: h,
      polarity: seg.positive[h] === 1 ? 'positive' : 'negative',
      start: seg.start[h]!,
      end: seg.end[h]!,
      inWindow: h >= w0 && h < w1,
      rms: c > 0 ? Math.sqrt(byCount ? seg.sum2[h]! / c : (seg.sum2[h]! * dt) / (seg.end[h]! - seg.start[h]!)) : 0,
      peak: Math.abs(seg.max[h]!) >= Math.abs(seg.min[h]!) ? seg.max[h]! : seg.min[h]!,
      conductionDeg: seg.conduction[h]!,
      shape: HALF_CYCLE_SHAPES[seg.shape[h]!]!,
      switchOnDeg: Number.isNaN(seg.on[h]!) ? null : seg.on[h]!,
      switchOffDeg: Number.isNaN(seg.off[h]!) ? null : seg.off[h]!,
    })
  }
  return halfCycles
}

/**
 * RMS over the whole-cycle window. Sums are normalised by duration (in sample intervals),
 * not by sample count: a sample that falls exactly on a zero crossing belongs to either
 * half-cycle, and counting it would skew a half-cycle's RMS by one sample in forty at 2 kS/s. It
 * carries ~0 V, so its sum is the same.
 */
function windowFeatures(ctx: Context, seg: Segmentation, w0: number, w1: number, sums: WindowSums) {
  const windowSpan = ctx.byCount ? sums.count : (seg.end[w1 - 1]! - seg.start[w0]!) / ctx.dt
  const [pos, neg] = sums.polarity
  return {
    windowSpan,
    vrms: Math.sqrt(sums.sumV2 / windowSpan),
    rmsPos: Math.sqrt(pos.sum2 / pos.count),
    rmsNeg: Math.sqrt(neg.sum2 / neg.count),
    positive: polarityStats(pos),
    negative: polarityStats(neg),
  }
}

/** Power, current RMS and THD over the window, when the capture has a current channel. */
function currentFeatures(sums: WindowSums, windowSpan: number, vrms: number, supplyVrms: number, harmonics: NonNullable<WaveformAnalysis['harmonics']>): WaveformFeatures['current'] {
  if (harmonics.current === undefined) return undefined
  const irms = Math.sqrt(sums.sumI2 / windowSpan)
  const realPowerW = sums.sumVI / windowSpan
  // An open load's current holds no fundamental to speak of, so its THD would be noise over noise.
  if (!(harmonics.current.amplitudes[1]! > 0.01 * irms)) {
    harmonics.current.thd = null
    harmonics.displacementFactor = null
  }
  return {
    irms,
    realPowerW,
    powerFactor: irms > 0 && vrms > 0 ? realPowerW / (vrms * irms) : null,
    thd: harmonics.current.thd,
    supplyPowerFactor: irms > 0 ? realPowerW / (supplyVrms * irms) : null,
  }
}

export function analyseWaveform(capture: CaptureSamples, options: AnalyseOptions = {}): WaveformAnalysis {
  const { t, v, i } = capture
  const warnings: string[] = []
  const checked = checkCapture(capture, options, warnings)
  const levels = measureLevels(v, checked.vmin, checked.vmax)
  const { q001, q999, baseline, offStateNoise } = levels
  // Dead means no voltage at all: a constant 48 V is a live (if odd) capture, not a dead load.
  const peakAbs = Math.max(Math.abs(q999), Math.abs(q001))
  const ctx: Context = { ...checked, peakAbs, warnings }
  const { sampleRateHz, durationS, dt } = ctx
  if (peakAbs < ctx.deadBelowV) return deadResult(capture, sampleRateHz, durationS, peakAbs, ctx.deadBelowV, null)

  const period = findMainsPeriod(ctx, levels, options)
  if ('dead' in period) return period.dead
  const { crossings } = period
  // Conducting samples stand clear of the off-state: above a tenth of the peak and of its noise.
  const peakAmp = Math.max(q999 - baseline, baseline - q001)
  const present = Math.max(0.1 * peakAmp, 5 * offStateNoise)
  const fitted = fitMainsSupply(ctx, levels, crossings, present)
  if ('dead' in fitted) return fitted.dead
  const { fit } = fitted.supply
  // Segmentation works in the fit's own frame; the reported frequency adds the remaining drift.
  const omega = (2 * Math.PI) / fit.period
  const frequencyHz = 1 / fitted.supply.period
  const followsSine = fit.noiseV < 0.2 * fit.vpk
  if (!followsSine) warnings.push(`the voltage does not follow a sine where present (residual ${((100 * fit.noiseV) / fit.vpk).toFixed(0)} % of peak)`)

  const seg = segmentHalfCycles(t, v, i, fit, fit.baseline, crossings.reference, omega, ctx.evenGrid, options.maxCutPoints ?? 2000)
  const { w0, w1, cycles } = wholeCycleWindow(ctx, seg, frequencyHz)
  const sums = sumWindow(seg, w0, w1, dt, ctx.byCount)
  const { windowSpan, vrms, rmsPos, rmsNeg, positive, negative } = windowFeatures(ctx, seg, w0, w1, sums)

  const guardDeg = Math.asin(clamp(median(fit.guard) / fit.vpk, 0, 1)) * DEG
  let verdict = classifyCut(positive, negative, guardDeg)
  if (!followsSine) verdict = { type: 'irregular', confidence: clamp(0.5 + (fit.noiseV / fit.vpk - 0.2) / 0.4, 0.5, 1) }
  // Where the half-cycles follow no pattern the verdict says so; events are the exceptions to one.
  const events = verdict.type === 'irregular' ? { events: [], total: 0 } : halfCycleEvents(seg, w0, w1, positive, negative, options.maxEvents ?? 200)
  if (events.total > 0) warnings.push(eventsWarning(events.events, events.total))

  const harmonics = analyseHarmonics(
    t, v, i, seg, w0, cycles, frequencyHz, sampleRateHz, options.maxHarmonic ?? DEFAULT_MAX_HARMONIC, options.maxHarmonicWindows ?? 15,
  )
  const supplyVrms = fit.vpk / Math.SQRT2
  const features: WaveformFeatures = {
    frequencyHz,
    vpk: sums.vpk,
    vrms,
    halfCycleRms: { positive: rmsPos, negative: rmsNeg },
    asymmetry: rmsPos + rmsNeg > 0 ? (rmsPos - rmsNeg) / (rmsPos + rmsNeg) : 0,
    conductionAngleDeg: { positive: positive.medianDeg, negative: negative.medianDeg },
    cutType: verdict.type,
    dcOffset: sums.sumV / windowSpan,
    crestFactor: vrms > 0 ? sums.vpk / vrms : null,
    thd: harmonics.voltage.thd,
    samples: ctx.n,
    cycles,
    dead: false,
    supplyVrms,
  }
  if (i !== undefined) {
    const current = currentFeatures(sums, windowSpan, vrms, supplyVrms, harmonics)
    if (current !== undefined) features.current = current
  }

  const halfCycles = halfCycleDetails(seg, w0, w1, dt, ctx.byCount, options.maxHalfCycleDetails ?? 4000)
  if (crossings.crossings < crossings.total) {
    warnings.push(`${crossings.total - crossings.crossings} of ${crossings.total} zero crossings did not fit the mains period and were ignored`)
  }

  const uncertaintyHz = fitted.supply.uncertaintyHz
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
    window: { start: seg.start[w0]!, end: seg.end[w1 - 1]!, cycles, samples: sums.count },
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
    events: events.events,
    eventsTotal: events.total,
    warnings,
  }
}

const EVENT_WORDS: Record<HalfCycleEvent['kind'], string> = { missing: 'missing', uncontrolled: 'uncontrolled (a full half-sine)', cut: 'cut', erratic: 'erratic' }

/** "1 half-cycle unlike the others: negative, missing at 125.0 ms", naming at most three. */
function eventsWarning(events: HalfCycleEvent[], total: number): string {
  const named = events.slice(0, 3).map(e => `${e.polarity}, ${EVENT_WORDS[e.kind]} at ${(e.t * 1000).toFixed(1)} ms`)
  const more = total > named.length ? `, and ${total - named.length} more` : ''
  return `${total} half-cycle${total === 1 ? '' : 's'} unlike the others: ${named.join('; ')}${more}`
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
    events: [],
    eventsTotal: 0,
    warnings: [
      noMains === null
        ? `no voltage at the load: the peak of ${peak.toFixed(2)} V is below ${deadBelowV} V`
        : `no voltage at the load: ${noMains}, and the ${features.vrms.toFixed(1)} V RMS that is there reads as noise`,
    ],
  }
}
