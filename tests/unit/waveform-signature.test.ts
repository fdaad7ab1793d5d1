import fc from 'fast-check'
import { describe, expect, it } from 'vitest'
import { analyseWaveform, type WaveformFeatures } from '../../shared/utils/waveform/analyse'
import { synthesiseCapture, type SynthOptions } from '../../shared/utils/waveform/synth'
import {
  groupRanked,
  nearestNominalVrms,
  rankSignatures,
  SIGNATURE_COMPONENTS,
  SIGNATURE_WEIGHTS,
  signatureDistance,
  signatureVector,
  type SignatureFeatures,
} from '../../shared/utils/waveform/signature'

function features(options: SynthOptions): WaveformFeatures {
  return analyseWaveform(synthesiseCapture({ sampleRateHz: 20_000, cycles: 10, ...options })).features
}

// Reference captures as an author would attach them to steps. The waveform shapes are those of
// phase control on a resistive load (Rashid, Power Electronics 4th ed., ch. 11); a failed half is
// one polarity conducting in full while the other is still cut (common practice: one shorted
// device of a bridge).
const references = [
  { id: 'trailing-60', features: features({ cut: 'trailing_edge', conductionAngleDeg: 60 }) },
  { id: 'trailing-90', features: features({ cut: 'trailing_edge', conductionAngleDeg: 90 }) },
  { id: 'trailing-135', features: features({ cut: 'trailing_edge', conductionAngleDeg: 135 }) },
  { id: 'half-uncontrolled', features: features({ cut: 'half_uncontrolled', faultPolarity: 'negative', edge: 'trailing_edge', conductionAngleDeg: 90 }) },
  { id: 'leading', features: features({ cut: 'leading_edge', firingAngleDeg: 90 }) },
  { id: 'dead', features: features({ cut: 'dead', noiseVrms: 0.3 }) },
]

describe('rankSignatures: a capture is nearest the reference of its own kind', () => {
  // Queries differ from the references in supply (240 V, 120 V / 60 Hz), setting, noise, offset,
  // sample rate and start phase, as a capture from another bench would.
  const queries: Array<[string, SynthOptions]> = [
    ['trailing-90', { vrms: 240, cut: 'trailing_edge', conductionAngleDeg: 96, noiseVrms: 3, startPhaseDeg: 50, sampleRateHz: 50_000 }],
    ['trailing-135', { vrms: 120, frequencyHz: 60, cut: 'trailing_edge', conductionAngleDeg: 128, noiseVrms: 1.5, cycles: 12 }],
    ['trailing-60', { cut: 'trailing_edge', conductionAngleDeg: 66, edgeDurationS: 100e-6, dcOffset: 2 }],
    ['half-uncontrolled', { vrms: 240, cut: 'half_uncontrolled', faultPolarity: 'negative', edge: 'trailing_edge', conductionAngleDeg: 100, noiseVrms: 3 }],
    ['half-uncontrolled', { cut: 'half_uncontrolled', faultPolarity: 'negative', edge: 'trailing_edge', conductionAngleDeg: 70, startPhaseDeg: 200 }],
    ['leading', { vrms: 240, cut: 'leading_edge', firingAngleDeg: 80, noiseVrms: 3 }],
    ['leading', { vrms: 120, frequencyHz: 60, cut: 'leading_edge', firingAngleDeg: 105, cycles: 12 }],
    ['dead', { cut: 'dead', noiseVrms: 0.8, dcOffset: 0.5, seed: 77 }],
  ]
  it.each(queries)('→ %s', (expected, options) => {
    const ranked = rankSignatures(features(options), references)
    expect(ranked[0]!.id).toBe(expected)
    // Sorted, with similarity = 1 − distance.
    for (let k = 1; k < ranked.length; k++) expect(ranked[k]!.distance).toBeGreaterThanOrEqual(ranked[k - 1]!.distance)
    for (const m of ranked) expect(m.similarity).toBeCloseTo(1 - m.distance, 12)
  })

  it('a dead unit is far from every live reference, and a live capture far from dead', () => {
    const dead = references.find(r => r.id === 'dead')!.features
    for (const r of references.filter(x => x.id !== 'dead')) expect(signatureDistance(dead, r.features)).toBeGreaterThan(0.45)
  })

  it('keeps the references’ order on ties', () => {
    const same = references[1]!.features
    const ranked = rankSignatures(same, [{ id: 'b', features: same }, { id: 'a', features: same }])
    expect(ranked.map(m => m.id)).toEqual(['b', 'a'])
    expect(ranked[0]!.distance).toBe(0)
  })
})

describe('signatureDistance: a metric on the unit cube (definition of a weighted Euclidean distance)', () => {
  const arbitraryFeatures: fc.Arbitrary<SignatureFeatures> = fc.record({
    vrms: fc.double({ min: 0, max: 260, noNaN: true }),
    asymmetry: fc.double({ min: -1, max: 1, noNaN: true }),
    conductionAngleDeg: fc.record({ positive: fc.double({ min: 0, max: 180, noNaN: true }), negative: fc.double({ min: 0, max: 180, noNaN: true }) }),
    cutType: fc.constantFrom('none' as const, 'leading_edge' as const, 'trailing_edge' as const, 'half_missing' as const, 'irregular' as const),
    crestFactor: fc.option(fc.double({ min: 1, max: 10, noNaN: true }), { nil: null }),
    thd: fc.option(fc.double({ min: 0, max: 5, noNaN: true }), { nil: null }),
    dead: fc.boolean(),
    supplyVrms: fc.option(fc.double({ min: 90, max: 260, noNaN: true }), { nil: null }),
  })

  it('is zero to itself, symmetric, within 0..1 and obeys the triangle inequality', () => {
    fc.assert(
      fc.property(arbitraryFeatures, arbitraryFeatures, arbitraryFeatures, (a, b, c) => {
        expect(signatureDistance(a, a)).toBe(0)
        const ab = signatureDistance(a, b)
        expect(ab).toBe(signatureDistance(b, a))
        expect(ab).toBeGreaterThanOrEqual(0)
        expect(ab).toBeLessThanOrEqual(1)
        expect(ab).toBeLessThanOrEqual(signatureDistance(a, c) + signatureDistance(c, b) + 1e-12)
      }),
      { numRuns: 300, seed: 42 },
    )
  })

  it('is zero and symmetric on the analysed references too', () => {
    for (const x of references) {
      expect(signatureDistance(x.features, x.features)).toBe(0)
      for (const y of references) expect(signatureDistance(x.features, y.features)).toBe(signatureDistance(y.features, x.features))
    }
  })
})

describe('signatureVector', () => {
  it('has one weight per component and every component within 0..1', () => {
    expect(SIGNATURE_WEIGHTS).toHaveLength(SIGNATURE_COMPONENTS.length)
    for (const r of references) {
      const v = signatureVector(r.features)
      expect(v).toHaveLength(SIGNATURE_COMPONENTS.length)
      for (const x of v) {
        expect(x).toBeGreaterThanOrEqual(0)
        expect(x).toBeLessThanOrEqual(1)
      }
      // Exactly one cut type is set.
      expect(v.slice(3, 8).reduce((s, x) => s + x, 0)).toBe(1)
    }
  })

  it('maps a full sine to full conduction, no asymmetry, crest √2 → 0, level 1 (definitions)', () => {
    const v = signatureVector(features({ vrms: 230 }))
    expect(v[0]).toBeCloseTo(1, 9)
    expect(v[1]).toBeCloseTo(1, 9)
    expect(v[2]).toBeCloseTo(0.5, 9)
    expect(v[3]).toBe(1)
    expect(v[9]).toBeCloseTo(0, 6)
    expect(v[11]).toBeCloseTo(1, 6)
  })

  it('bounds THD as THD_R = THD_F/√(1 + THD_F²) (Shmilovitz, IEEE Trans. Power Delivery 2005)', () => {
    const base: SignatureFeatures = { vrms: 100, asymmetry: 0, conductionAngleDeg: { positive: 90, negative: 90 }, cutType: 'leading_edge', crestFactor: 2, thd: 1 }
    expect(signatureVector(base)[10]).toBeCloseTo(1 / Math.SQRT2, 12)
    expect(signatureVector({ ...base, thd: 0.75 })[10]).toBeCloseTo(0.6, 12)
  })

  it('measures level against the nearest nominal mains (IEC 60038 nominal voltages, from memory)', () => {
    expect(nearestNominalVrms(236)).toBe(240)
    expect(nearestNominalVrms(118)).toBe(120)
    expect(nearestNominalVrms(40)).toBe(100)
    // A full sine of 40 V picked up by a disconnected load is not a healthy 230 V output.
    const pickup = features({ vrms: 40 })
    const healthy = features({ vrms: 230 })
    expect(signatureVector(pickup)[11]).toBeCloseTo(0.4, 3)
    expect(signatureVector(healthy)[11]).toBeCloseTo(1, 3)
    expect(signatureDistance(pickup, healthy)).toBeGreaterThan(0.15)
  })

  it('falls back to a nominal supply when stored features carry none', () => {
    const stored: SignatureFeatures = { vrms: 115, asymmetry: 0, conductionAngleDeg: { positive: 90, negative: 90 }, cutType: 'trailing_edge', crestFactor: 2, thd: 0.64 }
    expect(signatureVector(stored)[11]).toBeCloseTo(0.5, 12)
    expect(signatureVector(stored, { nominalVrms: 120 })[11]).toBeCloseTo(115 / 120, 12)
  })
})

describe('groupRanked: one entry per procedure, best reference first', () => {
  it('keeps the rank order inside each group and orders groups by their best member', () => {
    const ranked = [
      { id: 1, procedure: 'b', distance: 0.1 },
      { id: 2, procedure: 'a', distance: 0.2 },
      { id: 3, procedure: 'b', distance: 0.3 },
      { id: 4, procedure: 'c', distance: 0.4 },
      { id: 5, procedure: 'a', distance: 0.5 },
      { id: 6, procedure: 'b', distance: 0.6 },
    ]
    expect(groupRanked(ranked, m => m.procedure).map(g => g.map(m => m.id))).toEqual([[1, 3, 6], [2, 5], [4]])
    expect(groupRanked([], () => 'x')).toEqual([])
  })
})
