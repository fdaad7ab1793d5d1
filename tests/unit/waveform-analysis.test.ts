import { createRequire } from 'node:module'
import fc from 'fast-check'
import { describe, expect, it } from 'vitest'
import {
  amplitudeSpectrum,
  analyseWaveform,
  WaveformError,
  type WaveformAnalysis,
} from '../../shared/utils/waveform/analyse'
import { decimateMinMax } from '../../shared/utils/waveform/decimate'
import { seededRandom } from '../../shared/utils/random'
import { seededGaussian, synthesiseCapture, type SynthOptions } from '../../shared/utils/waveform/synth'

// A second, independent FFT from the registry (radix-2 Cooley–Tukey, untyped CommonJS).
const require = createRequire(import.meta.url)
const fftJs = require('fft-js') as { fft: (signal: number[]) => Array<[number, number]> }

const RAD = Math.PI / 180

function analyse(options: SynthOptions, analyseOptions = {}): WaveformAnalysis {
  return analyseWaveform(synthesiseCapture(options), analyseOptions)
}

/** Vrms/Vpk of leading-edge phase control: √[(π − α + ½·sin 2α)/(2π)] (Rashid, Power Electronics 4th ed., ch. 11). */
function leadingEdgeRatio(alphaDeg: number): number {
  const a = alphaDeg * RAD
  return Math.sqrt((Math.PI - a + 0.5 * Math.sin(2 * a)) / (2 * Math.PI))
}

/** Vrms/Vpk of trailing-edge control with conduction β: √[(β − ½·sin 2β)/(2π)] (computed in closed form). */
function trailingEdgeRatio(betaDeg: number): number {
  const b = betaDeg * RAD
  return Math.sqrt((b - 0.5 * Math.sin(2 * b)) / (2 * Math.PI))
}

/** Peak amplitude of odd harmonic n of a resistive-load current under leading-edge control at α (computed from the Fourier integrals). */
function leadingEdgeHarmonic(n: number, alphaDeg: number, peak: number): number {
  const a = alphaDeg * RAD
  if (n === 1) return peak * Math.hypot((Math.cos(2 * a) - 1) / (2 * Math.PI), (Math.PI - a + Math.sin(2 * a) / 2) / Math.PI)
  const cosPart = (th: number) => 0.5 * (-Math.cos((1 + n) * th) / (1 + n) - Math.cos((1 - n) * th) / (1 - n))
  const sinPart = (th: number) => 0.5 * (Math.sin((1 - n) * th) / (1 - n) - Math.sin((1 + n) * th) / (1 + n))
  return peak * (2 / Math.PI) * Math.hypot(cosPart(Math.PI) - cosPart(a), sinPart(Math.PI) - sinPart(a))
}

describe('analyseWaveform: RMS, peak and crest factor', () => {
  it('a sampled sine has Vrms = Vpk/√2 and crest factor √2 (any circuits text)', () => {
    const r = analyse({ vpk: 325, sampleRateHz: 100_000, cycles: 10 })
    expect(Math.abs(r.features.vrms / (325 / Math.SQRT2) - 1)).toBeLessThan(1e-9)
    expect(r.features.crestFactor).toBeCloseTo(Math.SQRT2, 9)
    expect(r.features.cutType).toBe('none')
    expect(r.features.conductionAngleDeg).toEqual({ positive: 180, negative: 180 })
    expect(r.features.asymmetry).toBeCloseTo(0, 9)
    expect(r.features.cycles).toBe(10)
    expect(r.features.samples).toBe(20_000)
  })

  it('keeps Vrms = Vpk/√2 at an arbitrary start phase and a fractional capture length (any circuits text)', () => {
    // From 123° the first whole half-cycle starts at 180°; 7 whole cycles end at 2700° < 2776°.
    const r = analyse({ vpk: 100, sampleRateHz: 50_000, cycles: 7.37, startPhaseDeg: 123 })
    expect(r.features.cycles).toBe(7)
    expect(Math.abs(r.features.vrms / (100 / Math.SQRT2) - 1)).toBeLessThan(1e-9)
  })

  it.each([
    [230, 325.27],
    [240, 339.41],
    [120, 169.71],
    [277, 391.74],
  ])('mains peak of %d V RMS is √2 × RMS = %d V (definition)', (vrms, peak) => {
    const r = analyse({ vrms, sampleRateHz: 100_000, cycles: 4 })
    expect(r.features.vpk).toBeCloseTo(peak, 2)
    expect(r.features.supplyVrms).toBeCloseTo(vrms, 6)
  })

  it('a half-wave rectified sine has RMS Vpk/2, mean Vpk/π and one half missing (any circuits text)', () => {
    const r = analyse({ vpk: 200, cut: 'half_missing', sampleRateHz: 100_000, cycles: 10 })
    expect(Math.abs(r.features.vrms / 100 - 1)).toBeLessThan(1e-6)
    expect(Math.abs(r.features.dcOffset / (200 / Math.PI) - 1)).toBeLessThan(1e-6)
    expect(r.features.cutType).toBe('half_missing')
    expect(r.cut.halfFault).toEqual({ polarity: 'negative', mode: 'absent' })
    expect(r.features.conductionAngleDeg).toEqual({ positive: 180, negative: 0 })
    // RMS over the positive half-cycles alone is that of the sine: Vpk/√2.
    expect(r.features.halfCycleRms.positive).toBeCloseTo(200 / Math.SQRT2, 6)
    expect(r.features.halfCycleRms.negative).toBeCloseTo(0, 9)
    expect(r.features.asymmetry).toBeCloseTo(1, 9)
  })

  it('Vrms² is the mean of the two half-cycle mean squares (definition of RMS over whole cycles)', () => {
    const r = analyse({ vrms: 230, cut: 'half_uncontrolled', edge: 'trailing_edge', conductionAngleDeg: 70, sampleRateHz: 50_000, cycles: 8.5, startPhaseDeg: 40 })
    const { positive, negative } = r.features.halfCycleRms
    expect(r.features.vrms ** 2).toBeCloseTo((positive ** 2 + negative ** 2) / 2, 6)
  })
})

describe('analyseWaveform: phase control (Rashid, Power Electronics: Devices, Circuits, and Applications, 4th ed., ch. 11)', () => {
  // Captures at 96 001 S/s, so that cuts fall anywhere between samples, as on a real scope.
  const table: Array<[number, number]> = [
    [30, 0.696838],
    [60, 0.634231],
    [90, 0.5],
    [120, 0.312651],
    [150, 0.120072],
  ]

  it.each(table)('closed form √[(π−α+½·sin2α)/(2π)] at α = %d° is %d (Rashid ch. 11)', (alpha, ratio) => {
    expect(leadingEdgeRatio(alpha)).toBeCloseTo(ratio, 6)
  })

  it.each(table)('leading edge at α = %d°: Vrms/Vpk = %d within 1e-3, cut and conduction recovered', (alpha, ratio) => {
    const r = analyse({ vpk: 325, cut: 'leading_edge', firingAngleDeg: alpha, sampleRateHz: 96_001, cycles: 20.4, startPhaseDeg: 17 })
    expect(Math.abs(r.features.vrms / 325 - ratio)).toBeLessThan(1e-3)
    expect(r.features.cutType).toBe('leading_edge')
    expect(r.cut.confidence).toBeGreaterThan(0.9)
    expect(r.features.conductionAngleDeg.positive).toBeCloseTo(180 - alpha, 1)
    expect(r.features.conductionAngleDeg.negative).toBeCloseTo(180 - alpha, 1)
    expect(r.cut.positive.switchOnDeg).toBeCloseTo(alpha, 1)
    expect(r.cut.negative.switchOnDeg).toBeCloseTo(alpha, 1)
    // One switch-on edge per half-cycle, at the firing angle.
    expect(r.cutPoints.every(p => p.edge === 'switch_on' && Math.abs(p.angleDeg - alpha) < 0.1)).toBe(true)
  })

  it.each(table)('trailing edge with conduction β = 180° − %d° gives the same RMS (%d, closed form) and trailing_edge', (alpha, ratio) => {
    const beta = 180 - alpha
    expect(trailingEdgeRatio(beta)).toBeCloseTo(ratio, 6)
    const r = analyse({ vpk: 325, cut: 'trailing_edge', conductionAngleDeg: beta, sampleRateHz: 96_001, cycles: 20.4, startPhaseDeg: 17 })
    expect(Math.abs(r.features.vrms / 325 - trailingEdgeRatio(beta))).toBeLessThan(1e-3)
    expect(r.features.cutType).toBe('trailing_edge')
    expect(r.features.conductionAngleDeg.positive).toBeCloseTo(beta, 1)
    expect(r.features.conductionAngleDeg.negative).toBeCloseTo(beta, 1)
    expect(r.cut.positive.switchOffDeg).toBeCloseTo(beta, 1)
  })

  it('recovers conduction angles and RMS over random settings, rates and phases (closed forms above)', () => {
    fc.assert(
      fc.property(
        fc.integer({ min: 25, max: 155 }),
        fc.constantFrom('leading_edge' as const, 'trailing_edge' as const),
        fc.integer({ min: 20_000, max: 120_000 }),
        fc.double({ min: 0, max: 360, noNaN: true }),
        fc.constantFrom(50, 60),
        (alpha, cut, sampleRateHz, startPhaseDeg, frequencyHz) => {
          const r = analyse({ vpk: 325, cut, firingAngleDeg: alpha, sampleRateHz, startPhaseDeg, frequencyHz, cycles: 6 })
          const ratio = cut === 'leading_edge' ? leadingEdgeRatio(alpha) : trailingEdgeRatio(180 - alpha)
          expect(r.features.cutType).toBe(cut)
          expect(Math.abs(r.features.vrms / 325 - ratio)).toBeLessThan(2e-3)
          // One sample is 360°·f/fs; edges are placed within half of it.
          const step = (360 * frequencyHz) / sampleRateHz
          expect(Math.abs(r.features.conductionAngleDeg.positive - (180 - alpha))).toBeLessThan(step)
          expect(Math.abs(r.features.frequencyHz! - frequencyHz)).toBeLessThan(0.01)
        },
      ),
      { numRuns: 25, seed: 2011 },
    )
  })

  it('Rashid 4th ed. Example 11.1 (120 V, 60 Hz, 10 Ω, α = 90°): Vo, Io, Po and input PF', () => {
    const r = analyse({ vrms: 120, frequencyHz: 60, cut: 'leading_edge', firingAngleDeg: 90, load: { resistanceOhm: 10 }, sampleRateHz: 100_000, cycles: 12 })
    const current = r.features.current!
    expect(Math.abs(r.features.vrms / 84.853 - 1)).toBeLessThan(1e-3)
    expect(Math.abs(current.irms / 8.4853 - 1)).toBeLessThan(1e-3)
    expect(Math.abs(current.realPowerW / 720 - 1)).toBeLessThan(1e-3)
    // Rashid's PF is the input power factor Po/(Vs·Io), with Vs the 120 V supply.
    expect(Math.abs(current.supplyPowerFactor! / 0.70711 - 1)).toBeLessThan(1e-3)
    // Across the resistive load itself, voltage and current are proportional: PF = 1 (definition).
    expect(current.powerFactor).toBeCloseTo(1, 6)
    expect(r.features.frequencyHz).toBeCloseTo(60, 2)
  })

  it('one half-cycle uncontrolled: full positive half over a cut negative half reads half_missing (common practice: a shorted device on one half)', () => {
    // Started half a sample (0.18°) past the zero crossing, so the cut falls midway between samples.
    const r = analyse({ vrms: 230, cut: 'half_uncontrolled', faultPolarity: 'positive', edge: 'trailing_edge', conductionAngleDeg: 90, sampleRateHz: 50_000, cycles: 10.5, startPhaseDeg: 0.18 })
    expect(r.features.cutType).toBe('half_missing')
    expect(r.cut.halfFault).toEqual({ polarity: 'positive', mode: 'uncontrolled' })
    expect(r.features.conductionAngleDeg.positive).toBeCloseTo(180, 6)
    // Edges are placed within half a sample: 0.18° at 50 kS/s and 50 Hz.
    expect(Math.abs(r.features.conductionAngleDeg.negative - 90)).toBeLessThanOrEqual(0.18 + 1e-4)
    // Positive half: a full sine, Vpk/√2. Negative half: a trailing edge at β = 90°, whose RMS over
    // its own half-cycle equals the closed form for both halves cut.
    expect(r.features.halfCycleRms.positive).toBeCloseTo(230, 3)
    expect(r.features.halfCycleRms.negative / (230 * Math.SQRT2)).toBeCloseTo(trailingEdgeRatio(90), 3)
  })

  it('a soft trailing edge is placed where the load carries half the supply (definition of the edge used here)', () => {
    const ramp = 150e-6
    const r = analyse({ cut: 'trailing_edge', conductionAngleDeg: 100, edgeDurationS: ramp, sampleRateHz: 100_000, cycles: 10 })
    const halfRampDeg = (ramp * 50 * 360) / 2
    expect(r.cut.positive.switchOffDeg).toBeCloseTo(100 + halfRampDeg, 2)
    expect(r.features.cutType).toBe('trailing_edge')
    expect(r.supply!.vpk).toBeCloseTo(230 * Math.SQRT2, 2)
  })
})

describe('analyseWaveform: harmonics (THD_F = √(Σ_{h≥2} X_h²)/X₁, IEEE 519 / IEC 61000-2-2 definition)', () => {
  function squareWave(sampleRateHz: number, seconds: number, amplitude: number): { t: Float64Array, v: Float64Array } {
    const n = Math.round(sampleRateHz * seconds)
    const t = new Float64Array(n)
    const v = new Float64Array(n)
    for (let k = 0; k < n; k++) {
      t[k] = k / sampleRateHz
      v[k] = Math.sin(2 * Math.PI * 50 * t[k]! + 0.3) >= 0 ? amplitude : -amplitude
    }
    return { t, v }
  }
  /** Square wave harmonics are 4/(πh) for odd h (Fourier series). */
  function squareSeriesThd(maxOrder: number): number {
    let s = 0
    for (let h = 3; h <= maxOrder; h += 2) s += (1 / h) ** 2
    return Math.sqrt(s)
  }

  it('the truncated series matches the published square-wave values (Blagouchine & Moreau, IEEE Trans. Commun. 2011)', () => {
    expect(squareSeriesThd(39)).toBeCloseTo(0.47032, 5)
    expect(squareSeriesThd(49)).toBeCloseTo(0.47297, 5)
    expect(Math.sqrt((Math.PI ** 2) / 8 - 1)).toBeCloseTo(0.483426, 6)
  })

  it('square wave THD up to h 40 is 0.47032 (Blagouchine & Moreau 2011, to h ≤ 39), not the h ≤ 49 or all-harmonics value', () => {
    const r = analyseWaveform(squareWave(100_000, 0.2, 100))
    expect(r.harmonics!.maxHarmonic).toBe(40)
    expect(Math.abs(r.features.thd! - 0.47032)).toBeLessThan(2e-4)
    expect(Math.abs(r.features.thd! - squareSeriesThd(40))).toBeLessThan(2e-4)
    expect(Math.abs(r.features.thd! - 0.47297)).toBeGreaterThan(2e-3)
    // A square wave is no cut sine: the analysis says so instead of guessing a cut.
    expect(r.features.cutType).toBe('irregular')
  })

  it('with the cut-off at h 49 it gives 0.47297, and with every harmonic below Nyquist 0.483426 (Blagouchine & Moreau 2011)', () => {
    const capture = squareWave(100_000, 0.2, 100)
    expect(Math.abs(analyseWaveform(capture, { maxHarmonic: 49 }).features.thd! - 0.47297)).toBeLessThan(2e-4)
    const all = analyseWaveform(capture, { maxHarmonic: 100_000 })
    expect(all.harmonics!.maxHarmonic).toBe(950)
    expect(Math.abs(all.features.thd! - 0.483426)).toBeLessThan(5e-4)
  })

  it('leading-edge current at α = 90° (240 V, 10 Ω): I1, I3, I5 and THD to h 40 match the Fourier integrals (computed)', () => {
    // Firing instants fall midway between samples (0.09° = half a sample), so the record has no timing bias.
    const r = analyse({ vrms: 240, cut: 'leading_edge', firingAngleDeg: 90, load: { resistanceOhm: 10 }, sampleRateHz: 100_000, cycles: 10.5, startPhaseDeg: 0.09 })
    const peak = (240 * Math.SQRT2) / 10
    expect(leadingEdgeHarmonic(1, 90, peak)).toBeCloseTo(20.118, 3)
    expect(leadingEdgeHarmonic(3, 90, peak)).toBeCloseTo(10.804, 3)
    expect(leadingEdgeHarmonic(5, 90, peak)).toBeCloseTo(3.601, 3)
    const amplitudes = r.harmonics!.current!.amplitudes
    expect(amplitudes[1]).toBeCloseTo(20.118, 2)
    expect(amplitudes[3]).toBeCloseTo(10.804, 2)
    expect(amplitudes[5]).toBeCloseTo(3.601, 2)
    expect(amplitudes[2]).toBeLessThan(1e-6)
    // 63.94 % to h ≤ 40 (computed); 65.05 % with all harmonics is what a cut-off at 40 must not give.
    let s = 0
    for (let h = 3; h <= 40; h += 2) s += leadingEdgeHarmonic(h, 90, peak) ** 2
    expect(Math.sqrt(s) / leadingEdgeHarmonic(1, 90, peak)).toBeCloseTo(0.6394, 4)
    expect(Math.abs(r.features.current!.thd! - 0.6394)).toBeLessThan(5e-4)
    expect(Math.abs(r.features.current!.thd! - 0.6505)).toBeGreaterThan(5e-3)
    expect(r.features.vrms).toBeCloseTo(169.706, 2)
  })

  it('a supply with 5 % third and 3 % fifth harmonic has THD √(0.05² + 0.03²) = 5.831 % (definition)', () => {
    const r = analyse({ vrms: 230, harmonics: [{ order: 3, ratio: 0.05 }, { order: 5, ratio: 0.03, phaseDeg: 40 }], sampleRateHz: 20_000, cycles: 10 })
    expect(r.features.thd).toBeCloseTo(Math.hypot(0.05, 0.03), 5)
    expect(r.features.cutType).toBe('none')
  })

  it('corrects the resampler roll-off: a 10 % 19th harmonic reads 10 % even at the 2 kS/s floor (definition)', () => {
    for (const sampleRateHz of [2_000, 2_500, 10_000]) {
      const r = analyse({ vrms: 230, harmonics: [{ order: 19, ratio: 0.1 }], sampleRateHz, cycles: 10 })
      expect(Math.abs(r.features.thd! - 0.1)).toBeLessThan(5e-4)
    }
  })

  it.each([2_003, 5_003, 10_007, 100_003])('keeps the resampling error small at %d S/s: every harmonic to h 40 at 2 %/√h (definition)', (sampleRateHz) => {
    const maxOrder = Math.min(40, Math.floor((0.475 * sampleRateHz) / 50 + 1e-3))
    const harmonics = Array.from({ length: maxOrder - 1 }, (_, k) => ({ order: k + 2, ratio: 0.02 / Math.sqrt(k + 2), phaseDeg: 37 * (k + 2) }))
    const expected = Math.sqrt(harmonics.reduce((s, h) => s + h.ratio ** 2, 0))
    const r = analyse({ vrms: 230, harmonics, sampleRateHz, cycles: 10.5, startPhaseDeg: 13 })
    expect(r.harmonics!.maxHarmonic).toBe(maxOrder)
    // Bounds of the method as documented in analyse.ts: looser next to Nyquist at the lowest rates.
    expect(Math.abs(r.features.thd! / expected - 1)).toBeLessThan(sampleRateHz < 10_000 ? 2e-3 : 1e-4)
    const amplitudes = r.harmonics!.voltage.amplitudes
    const worst = Math.max(...harmonics.map(h => Math.abs(amplitudes[h.order]! / amplitudes[1]! / h.ratio - 1)))
    expect(worst).toBeLessThan(sampleRateHz < 10_000 ? 0.01 : 1e-3)
  })

  it('caps the harmonic order under Nyquist (sampling theorem): h ≤ 19 at 2 kS/s and 50 Hz, h ≤ 23 at 2.5 kS/s', () => {
    const r = analyse({ vrms: 230, sampleRateHz: 2_000, cycles: 10, cut: 'leading_edge', firingAngleDeg: 60 })
    expect(r.harmonics!.maxHarmonic).toBe(19)
    expect(r.features.cutType).toBe('leading_edge')
    expect(analyse({ vrms: 230, sampleRateHz: 2_500, cycles: 10 }).harmonics!.maxHarmonic).toBe(23)
  })

  it.each([
    [50, 10],
    [60, 12],
  ])('uses the IEC 61000-4-7 window at %d Hz: %d cycles, 5 Hz bins, up to 15 windows (3 s, IEC 61000-4-30)', (frequencyHz, cyclesPerWindow) => {
    const long = analyse({ frequencyHz, sampleRateHz: 10_000, cycles: 200 })
    expect(long.harmonics!.cyclesPerWindow).toBe(cyclesPerWindow)
    expect(long.harmonics!.binHz).toBeCloseTo(5, 9)
    expect(long.harmonics!.windows).toBe(15)
    expect(long.harmonics!.cycles).toBe(15 * cyclesPerWindow)
    const short = analyse({ frequencyHz, sampleRateHz: 10_000, cycles: 5.5 })
    expect(short.harmonics!.cyclesPerWindow).toBe(5)
    expect(short.harmonics!.windows).toBe(1)
  })

  it('its FFT agrees with the independent fft-js package on random input (power-of-two length)', () => {
    const uniform = seededRandom(7)
    for (const size of [64, 1024, 4096]) {
      const x = Float64Array.from({ length: size }, () => uniform() * 2 - 1)
      const ours = amplitudeSpectrum(x)
      const theirs = fftJs.fft(Array.from(x))
      for (let k = 0; k <= size / 2; k++) {
        const [re, im] = theirs[k]!
        const scale = k === 0 || k === size / 2 ? 1 / size : 2 / size
        expect(Math.abs(ours[k]! - Math.hypot(re, im) * scale)).toBeLessThan(1e-12)
      }
    }
  })
})

describe('analyseWaveform: frequency and offset', () => {
  it.each([
    [50, 230, 3.2],
    [60, 120, -1.7],
  ])('finds %d Hz within 0.1 Hz and the DC offset back under 2 %% noise (definition: mean over whole cycles)', (frequencyHz, vrms, dcOffset) => {
    const vpk = vrms * Math.SQRT2
    const r = analyse({ vrms, frequencyHz, dcOffset, noiseVrms: 0.02 * vpk, sampleRateHz: 25_000, cycles: 10.6, startPhaseDeg: 71, seed: 99 })
    expect(Math.abs(r.features.frequencyHz! - frequencyHz)).toBeLessThan(0.1)
    // Noise of σ = 2 % Vpk averages to σ/√N over the window's N samples: 4σ/√N bounds the mean.
    const bound = (4 * 0.02 * vpk) / Math.sqrt(r.window.samples)
    expect(Math.abs(r.features.dcOffset - dcOffset)).toBeLessThan(bound)
    expect(r.features.cutType).toBe('none')
    expect(r.frequency.confidence).toBeGreaterThan(0.5)
    // The robust noise estimate (1.4826·MAD over ≤ 4096 samples) is good to a few per cent.
    expect(Math.abs(r.supply!.noiseV / (0.02 * vpk) - 1)).toBeLessThan(0.05)
  })

  it('is not thrown off by spikes that cross zero (robust median period)', () => {
    const capture = synthesiseCapture({ vrms: 230, sampleRateHz: 20_000, cycles: 10, startPhaseDeg: 30 })
    const gauss = seededGaussian(5)
    for (const k of [1234, 5050, 9999, 15000]) capture.v[k] = -capture.v[k]! + 50 * gauss()
    const r = analyseWaveform(capture)
    expect(r.features.frequencyHz).toBeCloseTo(50, 3)
  })
})

describe('analyseWaveform: dead units and bad captures', () => {
  it('a dead unit gives a clear result, not an error: dead, 0° conduction, no frequency', () => {
    const r = analyse({ cut: 'dead', noiseVrms: 0.2, sampleRateHz: 20_000, cycles: 10, load: { resistanceOhm: 50 } })
    expect(r.features.dead).toBe(true)
    expect(r.features.cutType).toBe('none')
    expect(r.features.vrms).toBeLessThan(0.3)
    expect(r.features.conductionAngleDeg).toEqual({ positive: 0, negative: 0 })
    expect(r.features.frequencyHz).toBeNull()
    expect(r.features.thd).toBeNull()
    expect(r.features.cycles).toBe(0)
    expect(r.features.current!.irms).toBe(0)
    expect(r.warnings[0]).toMatch(/no voltage at the load/)
  })

  it('refuses a capture of one cycle only', () => {
    expect(() => analyse({ cycles: 1 })).toThrowError(expect.objectContaining({ code: 'TOO_FEW_CYCLES' }))
    expect(() => analyse({ cycles: 1.6, startPhaseDeg: 45 })).toThrowError(expect.objectContaining({ code: 'TOO_FEW_CYCLES' }))
  })

  it('refuses 500 S/s and says what rate is needed', () => {
    try {
      analyse({ sampleRateHz: 500, cycles: 10 })
      expect.unreachable()
    }
    catch (error) {
      expect(error).toBeInstanceOf(WaveformError)
      expect((error as WaveformError).code).toBe('SAMPLE_RATE_TOO_LOW')
      expect((error as WaveformError).message).toMatch(/2 kS\/s/)
    }
  })

  it('refuses a capture with no mains frequency: constant voltage, or a 400 Hz supply', () => {
    const t = Float64Array.from({ length: 4000 }, (_, k) => k / 20_000)
    const v = new Float64Array(4000).fill(48)
    expect(() => analyseWaveform({ t, v })).toThrowError(expect.objectContaining({ code: 'NO_MAINS_FREQUENCY' }))
    expect(() => analyse({ frequencyHz: 400, sampleRateHz: 100_000, cycles: 20 })).toThrowError(expect.objectContaining({ code: 'NO_MAINS_FREQUENCY' }))
  })

  it('refuses mismatched channels and a time axis that does not increase', () => {
    const { t, v } = synthesiseCapture({ cycles: 3, sampleRateHz: 5_000 })
    expect(() => analyseWaveform({ t, v: v.subarray(1) })).toThrowError(expect.objectContaining({ code: 'INVALID_INPUT' }))
    const back = t.slice()
    back[100] = back[99]!
    expect(() => analyseWaveform({ t: back, v })).toThrowError(expect.objectContaining({ code: 'INVALID_INPUT' }))
  })
})

describe('analyseWaveform: one polarity absent, single odd half-cycles, missing samples', () => {
  it.each([0, 33, 101, 250])('fits the full supply when 0 V is the maximum (positive half absent, start phase %d°): supply RMS = 230 V, RMS = Vpk/2 (any circuits text)', (startPhaseDeg) => {
    const r = analyse({ vrms: 230, cut: 'half_missing', faultPolarity: 'positive', sampleRateHz: 50_000, cycles: 10, startPhaseDeg })
    expect(r.cut.halfFault).toEqual({ polarity: 'positive', mode: 'absent' })
    // The supply is what the conducting half follows: √2 × 230 V peak (definition).
    expect(Math.abs(r.features.supplyVrms! / 230 - 1)).toBeLessThan(1e-6)
    expect(Math.abs(r.features.vrms / (230 * Math.SQRT2 / 2) - 1)).toBeLessThan(1e-6)
  })

  it('reports a single missing half-cycle in a full sine as an event at its zero crossing (50 Hz: half-cycle k starts at k × 10 ms, definition)', () => {
    const capture = synthesiseCapture({ vrms: 230, sampleRateHz: 20_000, cycles: 10, noiseVrms: 1, seed: 21 })
    // Half-cycle 13 (negative, 130–140 ms) never reaches the load.
    for (let k = 0; k < capture.t.length; k++) if (capture.t[k]! >= 0.13 && capture.t[k]! < 0.14) capture.v[k] = 0
    const r = analyseWaveform(capture)
    expect(r.features.cutType).toBe('none')
    expect(r.eventsTotal).toBe(1)
    expect(r.events[0]).toMatchObject({ polarity: 'negative', kind: 'missing', shape: 'absent', usual: 'full' })
    expect(r.events[0]!.t).toBeCloseTo(0.13, 5)
    expect(r.warnings.some(w => /1 half-cycle unlike the others: negative, missing at 130\.0 ms/.test(w))).toBe(true)
  })

  it('reports a single uncontrolled half-cycle among trailing-edge ones (common practice: a switch that fails to open once)', () => {
    const capture = synthesiseCapture({ vrms: 230, cut: 'trailing_edge', conductionAngleDeg: 90, sampleRateHz: 20_000, cycles: 10, seed: 22 })
    const full = synthesiseCapture({ vrms: 230, sampleRateHz: 20_000, cycles: 10, seed: 22 })
    // Positive half-cycle 4 (40–50 ms) runs the whole half-sine.
    for (let k = 0; k < capture.t.length; k++) if (capture.t[k]! >= 0.04 && capture.t[k]! < 0.05) capture.v[k] = full.v[k]!
    const r = analyseWaveform(capture)
    expect(r.features.cutType).toBe('trailing_edge')
    expect(r.events).toEqual([expect.objectContaining({ polarity: 'positive', kind: 'uncontrolled', usual: 'trailing_cut' })])
    expect(r.events[0]!.t).toBeCloseTo(0.04, 5)
  })

  it('lists no events for a regular capture', () => {
    expect(analyse({ vrms: 230, cut: 'leading_edge', firingAngleDeg: 60, sampleRateHz: 20_000, cycles: 10 }).eventsTotal).toBe(0)
  })

  it('keeps the sample rate and the RMS (Rashid ch. 11 closed form) when 1 % of the rows are missing, and says samples are missing rather than blaming the sampling', () => {
    const whole = synthesiseCapture({ vrms: 230, cut: 'leading_edge', firingAngleDeg: 60, sampleRateHz: 20_000, cycles: 10, load: { resistanceOhm: 50 } })
    const kept = Array.from({ length: whole.t.length }, (_, k) => k).filter(k => k % 97 !== 5)
    const r = analyseWaveform({ t: Float64Array.from(kept, k => whole.t[k]!), v: Float64Array.from(kept, k => whole.v[k]!), i: Float64Array.from(kept, k => whole.i![k]!) })
    expect(r.sampleRateHz).toBeCloseTo(20_000, 6)
    const vpk = 230 * Math.SQRT2
    expect(Math.abs(r.features.vrms / (vpk * leadingEdgeRatio(60)) - 1)).toBeLessThan(2e-3)
    // P = V²/R for a resistive load (definition).
    expect(Math.abs(r.features.current!.realPowerW / ((vpk * leadingEdgeRatio(60)) ** 2 / 50) - 1)).toBeLessThan(4e-3)
    expect(r.warnings.some(w => /^42 samples missing from the time axis \(42 gaps/.test(w))).toBe(true)
    expect(r.warnings.some(w => /sampling interval varies/.test(w))).toBe(false)
  })

  it('names what to change in the capture when it refuses one', () => {
    expect(() => analyse({ cycles: 1.2 })).toThrowError(/capture a longer stretch/)
    expect(() => analyse({ sampleRateHz: 500, cycles: 10 })).toThrowError(/capture again with a higher sample rate/)
  })
})

describe('analyseWaveform: details for the plot', () => {
  it('lists half-cycles in order, alternating polarity, bounded by the zero crossings', () => {
    const r = analyse({ cut: 'leading_edge', firingAngleDeg: 45, sampleRateHz: 20_000, cycles: 6.3, startPhaseDeg: 200 })
    const inWindow = r.halfCycles.filter(h => h.inWindow)
    expect(inWindow).toHaveLength(2 * r.features.cycles)
    expect(inWindow[0]!.polarity).toBe('positive')
    for (let k = 1; k < r.halfCycles.length; k++) {
      expect(r.halfCycles[k]!.polarity).not.toBe(r.halfCycles[k - 1]!.polarity)
      expect(r.halfCycles[k]!.start).toBeCloseTo(r.halfCycles[k - 1]!.end, 12)
      // 50 Hz: every half-cycle lasts 10 ms (definition).
      expect(r.halfCycles[k]!.end - r.halfCycles[k]!.start).toBeCloseTo(0.01, 9)
    }
    for (const p of r.cutPoints) {
      const h = r.halfCycles[p.halfCycle]!
      expect(p.t).toBeGreaterThan(h.start)
      expect(p.t).toBeLessThan(h.end)
      // The switch closes 45° into the half-cycle (within half a sample, 0.45° at 20 kS/s),
      // where the supply is Vpk·sin θ.
      expect(Math.abs(p.angleDeg - 45)).toBeLessThan(0.45)
      expect(Math.abs(p.supplyV)).toBeCloseTo(230 * Math.SQRT2 * Math.sin(p.angleDeg * RAD), 6)
    }
  })

  it('caps the cut points and the half-cycle details but still counts them all', () => {
    const r = analyse({ cut: 'trailing_edge', conductionAngleDeg: 120, sampleRateHz: 10_000, cycles: 100 }, { maxCutPoints: 50, maxHalfCycleDetails: 30 })
    expect(r.cutPoints).toHaveLength(50)
    expect(r.cutPointsTotal).toBeGreaterThanOrEqual(2 * r.features.cycles)
    expect(r.halfCycles).toHaveLength(30)
    expect(r.halfCyclesTotal).toBeGreaterThanOrEqual(2 * r.features.cycles)
  })
})

describe('decimateMinMax: min/max per pixel column for plotting (definition)', () => {
  const capture = synthesiseCapture({ cut: 'leading_edge', firingAngleDeg: 60, load: { resistanceOhm: 50 }, sampleRateHz: 100_000, cycles: 100, noiseVrms: 2 })
  // Single-sample spikes that plain subsampling would miss.
  capture.v[123_457] = 900
  capture.v[54_321] = -850

  it('keeps every bucket’s extremes, in time order, and at most two points per bucket', () => {
    const buckets = 700
    const d = decimateMinMax(capture.t, capture.v, buckets, capture.i)
    expect(d.t.length).toBeLessThanOrEqual(2 * buckets)
    for (let k = 1; k < d.t.length; k++) expect(d.t[k]!).toBeGreaterThan(d.t[k - 1]!)
    const t0 = capture.t[0]!
    const width = (capture.t[capture.t.length - 1]! - t0) / buckets
    const lo = new Float64Array(buckets).fill(Infinity)
    const hi = new Float64Array(buckets).fill(-Infinity)
    const lo2 = new Float64Array(buckets).fill(Infinity)
    const hi2 = new Float64Array(buckets).fill(-Infinity)
    for (let k = 0; k < capture.t.length; k++) {
      const b = Math.min(buckets - 1, Math.floor((capture.t[k]! - t0) / width))
      lo[b] = Math.min(lo[b]!, capture.v[k]!)
      hi[b] = Math.max(hi[b]!, capture.v[k]!)
      lo2[b] = Math.min(lo2[b]!, capture.i![k]!)
      hi2[b] = Math.max(hi2[b]!, capture.i![k]!)
    }
    const seen = { lo: new Float64Array(buckets).fill(Infinity), hi: new Float64Array(buckets).fill(-Infinity), lo2: new Float64Array(buckets).fill(Infinity), hi2: new Float64Array(buckets).fill(-Infinity) }
    for (let k = 0; k < d.t.length; k++) {
      const b = Math.min(buckets - 1, Math.floor((d.t[k]! - t0) / width))
      seen.lo[b] = Math.min(seen.lo[b]!, d.v[k]!)
      seen.hi[b] = Math.max(seen.hi[b]!, d.v[k]!)
      seen.lo2[b] = Math.min(seen.lo2[b]!, d.v2![k]!)
      seen.hi2[b] = Math.max(seen.hi2[b]!, d.v2![k]!)
    }
    expect(Array.from(seen.lo)).toEqual(Array.from(lo))
    expect(Array.from(seen.hi)).toEqual(Array.from(hi))
    expect(Array.from(seen.lo2)).toEqual(Array.from(lo2))
    expect(Array.from(seen.hi2)).toEqual(Array.from(hi2))
    expect(Math.max(...d.v)).toBe(900)
    expect(Math.min(...d.v)).toBe(-850)
  })

  it('returns short series unchanged', () => {
    const t = Float64Array.from([0, 1, 2])
    const v = Float64Array.from([5, -5, 5])
    expect(decimateMinMax(t, v, 10)).toEqual({ t, v })
  })
})
