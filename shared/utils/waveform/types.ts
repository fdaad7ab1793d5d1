/**
 * What the waveform analysis takes and gives: the capture, its features, the per-half-cycle
 * details for the plot, the options, and the one error it throws.
 */
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

/** How a half-cycle differs from the others of its polarity. */
export type HalfCycleEventKind = 'missing' | 'uncontrolled' | 'cut' | 'erratic'

/** A half-cycle unlike the others of its polarity: one dropped, one let through uncontrolled… */
export interface HalfCycleEvent {
  /** Start of the half-cycle (the supply's zero crossing), in seconds. */
  t: number
  /** Index into the capture's half-cycles. */
  halfCycle: number
  polarity: Polarity
  kind: HalfCycleEventKind
  shape: HalfCycleShape
  /** The shape the other half-cycles of this polarity have. */
  usual: HalfCycleShape
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
  /** Single half-cycles unlike the rest (in the whole-cycle window), in time order. */
  events: HalfCycleEvent[]
  eventsTotal: number
  warnings: string[]
}

export type WaveformErrorCode = 'INVALID_INPUT' | 'TOO_FEW_CYCLES' | 'SAMPLE_RATE_TOO_LOW' | 'NO_MAINS_FREQUENCY'

export class WaveformError extends Error {
  readonly code: WaveformErrorCode
  /** What is wrong with the capture, without the advice. */
  readonly reason: string
  /**
   * @param remedy what to change in the capture or the export, added to the message after the
   *   reason ("…; capture a longer stretch").
   */
  constructor(code: WaveformErrorCode, reason: string, remedy?: string) {
    super(remedy ? `${reason}: ${remedy}` : reason)
    this.name = 'WaveformError'
    this.code = code
    this.reason = reason
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
  /** Most half-cycle events listed (default 200; all are counted). */
  maxEvents?: number
  /** Most 200 ms harmonic windows combined (default 15, i.e. 3 s). */
  maxHarmonicWindows?: number
}

export const MIN_SAMPLE_RATE_HZ = 2000
export const DEFAULT_MAX_HARMONIC = 40
export const DEAD_BELOW_V = 5
/** A capture with no mains period and less RMS than this is a dead load seen through noise. */
export const NOISE_ONLY_BELOW_VRMS = 12
