import fc from 'fast-check'
import { describe, expect, it } from 'vitest'
import type { MeasurementSpec } from '#shared/types/measurement'
import type { ReasoningCause, ReasoningStep, StepVerdict, VerdictMap } from '#shared/types/verdicts'
import {
  AUTHOR_PSEUDO_RECORDS,
  causeProbabilities,
  describeChange,
  formatProbability,
  recordVerdicts,
  UNLISTED_CAUSE,
  unlistedPrior,
  verdictLikelihoods,
} from '#shared/utils/diagnosis'
import type { LearnedStats, Posterior } from '#shared/utils/diagnosis'
import { seededRandom } from '#shared/utils/random'

type Counts = LearnedStats['verdicts']

describe('causeProbabilities — Mitchell 1997 worked example', () => {
  // Mitchell, Machine Learning (1997), §6.9.1, PlayTennis data of Table 3.2, with Laplace add-one
  // smoothing (cardinalities 3, 3, 2, 2): P(no | sunny, cool, high, strong) = 0.72007 (REFERENCES,
  // computed). Each attribute is a step; its values are mapped onto the step's verdicts.
  const threeValued: MeasurementSpec = { quantity: 'dc_voltage', unit: 'V', min: 1 } // in_range, low, open
  const steps: ReasoningStep[] = [
    { key: 'outlook', title: 'Outlook', measurement: threeValued }, // sunny low, overcast in_range, rain open
    { key: 'temperature', title: 'Temperature', measurement: threeValued }, // hot low, mild in_range, cool open
    { key: 'humidity', title: 'Humidity' }, // high fail, normal pass
    { key: 'wind', title: 'Wind' }, // strong fail, weak pass
  ]
  const causes: ReasoningCause[] = [{ key: 'yes', name: 'Play' }, { key: 'no', name: 'No play' }]
  const counts: Counts = {
    outlook: { low: { yes: 2, no: 3 }, in_range: { yes: 4, no: 0 }, open: { yes: 3, no: 2 } },
    temperature: { low: { yes: 2, no: 2 }, in_range: { yes: 4, no: 2 }, open: { yes: 3, no: 1 } },
    humidity: { fail: { yes: 3, no: 4 }, pass: { yes: 6, no: 1 } },
    wind: { fail: { yes: 3, no: 3 }, pass: { yes: 6, no: 2 } },
  }
  const input = {
    causes,
    steps,
    priors: { yes: 9 / 14, no: 5 / 14 },
    unlistedPrior: 0,
    authorWeight: 0,
    stats: { records: 14, unlisted: 0, verdicts: counts },
    observed: { outlook: 'low', temperature: 'open', humidity: 'fail', wind: 'fail' } as Record<string, StepVerdict>,
  }

  it('gives P(no | x) = 0.72007 (Mitchell 1997 with Laplace smoothing, REFERENCES)', () => {
    const p = causeProbabilities(input)
    expect(p.probabilities.no).toBeCloseTo(0.72007, 5)
    expect(p.probabilities[UNLISTED_CAUSE]).toBe(0)
  })

  it('has the unnormalised scores 6/847 and 25/1372 in the ratio of the posteriors (REFERENCES, computed)', () => {
    const p = causeProbabilities(input)
    expect(p.probabilities.yes! / p.probabilities.no!).toBeCloseTo((6 / 847) / (25 / 1372), 12)
  })
})

describe('verdictLikelihoods — Laplace smoothing with the author as pseudo-records', () => {
  const step: ReasoningStep = { key: 'd1', title: 'D1 forward', measurement: { quantity: 'diode_drop', unit: 'V', min: 0.4, max: 0.9 }, verdicts: { low: { causes: ['shorted'] } } }
  const causes = [{ key: 'shorted', name: 'D1 shorted' }, { key: 'dried', name: 'C1 dried out' }]

  it('without records: the named verdict gets (A + 1)/(A + k), a cause named nowhere favours in range (computed)', () => {
    const A = AUTHOR_PSEUDO_RECORDS
    const t = verdictLikelihoods({ causes, steps: [step] }).d1!
    expect(t.shorted).toEqual({ in_range: 1 / (A + 4), low: (A + 1) / (A + 4), high: 1 / (A + 4), open: 1 / (A + 4) })
    expect(t.dried).toEqual({ in_range: (A + 1) / (A + 4), low: 1 / (A + 4), high: 1 / (A + 4), open: 1 / (A + 4) })
    expect(t[UNLISTED_CAUSE]).toEqual(t.dried)
  })

  it('with records: (n + α + 1)/(n_c + A + k) (computed by hand: 8 low and 2 in range → 15/20)', () => {
    const stats = { records: 10, unlisted: 0, verdicts: { d1: { low: { shorted: 8 }, in_range: { shorted: 2 } } } }
    const t = verdictLikelihoods({ causes, steps: [step], stats }).d1!.shorted!
    expect(t.low).toBeCloseTo(15 / 20, 15)
    expect(t.in_range).toBeCloseTo(3 / 20, 15)
    expect(t.high).toBeCloseTo(1 / 20, 15)
  })

  it('refuses negative counts', () => {
    expect(() => verdictLikelihoods({ causes, steps: [step], stats: { records: 1, unlisted: 0, verdicts: { d1: { low: { shorted: -1 } } } } })).toThrow(RangeError)
  })
})

// ---- brute-force enumeration of the joint distribution (computed) ----

type Shape = 'window' | 'min' | 'max' | 'open-only' | 'check'
const SHAPES: Record<Shape, { spec?: MeasurementSpec, verdicts: StepVerdict[] }> = {
  'window': { spec: { quantity: 'diode_drop', unit: 'V', min: 0.4, max: 0.9 }, verdicts: ['in_range', 'low', 'high', 'open'] },
  'min': { spec: { quantity: 'diode_drop', unit: 'V', min: 0.05 }, verdicts: ['in_range', 'low', 'open'] },
  'max': { spec: { quantity: 'continuity', unit: 'Ω', max: 1 }, verdicts: ['in_range', 'high', 'open'] },
  'open-only': { spec: { quantity: 'resistance', unit: 'Ω', openExpected: true }, verdicts: ['low', 'open'] },
  'check': { verdicts: ['pass', 'fail'] },
}

interface Model {
  causes: ReasoningCause[]
  steps: ReasoningStep[]
  shapes: Shape[]
  priors: Record<string, number>
  unlisted: number
  counts: Counts
  observed: Record<string, StepVerdict>
}

function pick<T>(rand: () => number, xs: readonly T[]): T {
  return xs[Math.floor(rand() * xs.length)]!
}

function randomModel(seed: number, opts: { records: boolean, failingOnly: boolean }): Model {
  const rand = seededRandom(seed)
  const causes = Array.from({ length: 1 + Math.floor(rand() * 3) }, (_, i) => ({ key: `c${i}`, name: `Cause ${i}` }))
  const keys = [...causes.map(c => c.key), UNLISTED_CAUSE]
  const shapes: Shape[] = []
  const counts: Counts = {}
  const steps = Array.from({ length: 1 + Math.floor(rand() * 4) }, (_, i): ReasoningStep => {
    const shape = pick(rand, Object.keys(SHAPES) as Shape[])
    shapes.push(shape)
    const { spec, verdicts } = SHAPES[shape]
    const map: VerdictMap = {}
    const passing = (v: StepVerdict) => v === 'in_range' || v === 'pass' || (v === 'open' && spec?.openExpected === true)
    const claimed = new Set<string>()
    for (const v of verdicts) {
      if (opts.failingOnly && passing(v)) continue
      if (rand() < 0.3) continue
      // failingOnly: each cause is named by at most one verdict of the step.
      const named = causes.filter(c => rand() < 0.5 && !(opts.failingOnly && claimed.has(c.key))).map(c => c.key)
      named.forEach(k => claimed.add(k))
      map[v] = { causes: named }
      if (!opts.failingOnly && rand() < 0.2) map[v] = { ...map[v], conclude: pick(rand, causes).key }
    }
    const failPointsTo = rand() < 0.3 && !opts.failingOnly ? [pick(rand, causes).key] : undefined
    if (opts.records) {
      counts[`s${i}`] = Object.fromEntries(verdicts.map(v => [v, Object.fromEntries(keys.map(k => [k, Math.floor(rand() * 4)]))]))
    }
    return { key: `s${i}`, title: `Step ${i}`, measurement: spec, verdicts: map, ...(failPointsTo ? { failPointsTo } : {}) }
  })
  const priors = Object.fromEntries(causes.map(c => [c.key, 0.05 + rand()]))
  const observed: Record<string, StepVerdict> = {}
  steps.forEach((s, i) => {
    if (rand() < 0.6) observed[s.key] = pick(rand, SHAPES[shapes[i]!].verdicts)
  })
  return { causes, steps, shapes, priors, unlisted: 0.02 + rand() * 0.5, counts, observed }
}

/** The documented likelihood, written again from its formula: (n + α + 1) / (n_c + Σα + k). */
function likelihood(m: Model, stepIndex: number, cause: string, verdict: StepVerdict): number {
  const step = m.steps[stepIndex]!
  const { spec, verdicts } = SHAPES[m.shapes[stepIndex]!]
  const passing = verdicts.filter(v => v === 'in_range' || v === 'pass' || (v === 'open' && spec?.openExpected === true))
  const causesOf = (v: StepVerdict) => {
    const entry = step.verdicts?.[v]
    const listed = entry?.causes ?? (passing.includes(v) ? [] : step.failPointsTo ?? [])
    return entry?.conclude ? [...listed, entry.conclude] : listed
  }
  const named = verdicts.filter(v => causesOf(v).includes(cause))
  const target = named.length > 0 ? named : passing
  const A = AUTHOR_PSEUDO_RECORDS
  const n = (v: StepVerdict) => m.counts[step.key]?.[v]?.[cause] ?? 0
  const total = verdicts.reduce((s, v) => s + n(v), 0)
  const alpha = (v: StepVerdict) => (target.includes(v) ? A / target.length : 0)
  return (n(verdict) + alpha(verdict) + 1) / (total + (target.length > 0 ? A : 0) + verdicts.length)
}

/** P(c | observed) by summing P(c, v₁ … vₙ) over every assignment of every step's verdict that agrees with what was read. */
function bruteForce(m: Model): Record<string, number> {
  const priorSum = Object.values(m.priors).reduce((a, b) => a + b, 0)
  const prior: Record<string, number> = { [UNLISTED_CAUSE]: m.unlisted }
  for (const c of m.causes) prior[c.key] = (1 - m.unlisted) * m.priors[c.key]! / priorSum
  const mass: Record<string, number> = Object.fromEntries(Object.keys(prior).map(k => [k, 0]))
  const assign = (i: number, chosen: StepVerdict[]) => {
    if (i === m.steps.length) {
      for (const c of Object.keys(prior)) {
        let joint = prior[c]!
        chosen.forEach((v, s) => (joint *= likelihood(m, s, c, v)))
        mass[c]! += joint
      }
      return
    }
    const seen = m.observed[m.steps[i]!.key]
    for (const v of SHAPES[m.shapes[i]!].verdicts) if (seen === undefined || seen === v) assign(i + 1, [...chosen, v])
  }
  assign(0, [])
  const total = Object.values(mass).reduce((a, b) => a + b, 0)
  return Object.fromEntries(Object.entries(mass).map(([k, v]) => [k, v / total]))
}

function posteriorOf(m: Model, observed = m.observed): Posterior {
  return causeProbabilities({
    causes: m.causes,
    steps: m.steps,
    priors: m.priors,
    unlistedPrior: m.unlisted,
    stats: { records: 0, unlisted: 0, verdicts: m.counts },
    observed,
  })
}

describe('causeProbabilities — brute-force enumeration of the joint distribution (computed)', () => {
  it('equals Σ over unread steps of P(c, v₁ … vₙ), normalised, on random small models (property)', () => {
    fc.assert(fc.property(fc.integer({ min: 1, max: 2 ** 31 - 1 }), fc.boolean(), (seed, records) => {
      const m = randomModel(seed, { records, failingOnly: false })
      const expected = bruteForce(m)
      const got = posteriorOf(m).probabilities
      expect(Object.keys(got).sort()).toEqual(Object.keys(expected).sort())
      for (const k of Object.keys(expected)) expect(Math.abs(got[k]! - expected[k]!)).toBeLessThan(1e-12)
    }), { numRuns: 300 })
  })
})

describe('causeProbabilities — readings move the causes they point to', () => {
  it('a good reading lowers, a failing one raises, each cause it would have shown (property)', () => {
    // Stated for author declarations where a cause is named by at most one failing verdict of a
    // step: a cause named by several verdicts shares its weight among them, so one of them can
    // favour a rival named by that verdict alone.
    fc.assert(fc.property(fc.integer({ min: 1, max: 2 ** 31 - 1 }), (seed) => {
      const m = randomModel(seed, { records: false, failingOnly: true })
      const rand = seededRandom(seed ^ 0x5bd1e995)
      const i = Math.floor(rand() * m.steps.length)
      const step = m.steps[i]!
      const observed = { ...m.observed }
      delete observed[step.key]
      const before = posteriorOf(m, observed).probabilities
      const { spec, verdicts } = SHAPES[m.shapes[i]!]
      const good = verdicts.find(v => v === 'in_range' || v === 'pass' || (v === 'open' && spec?.openExpected === true))!
      const afterGood = posteriorOf(m, { ...observed, [step.key]: good }).probabilities
      for (const [v, entry] of Object.entries(step.verdicts ?? {})) {
        const afterBad = posteriorOf(m, { ...observed, [step.key]: v as StepVerdict }).probabilities
        for (const c of entry?.causes ?? []) {
          expect(afterGood[c]!).toBeLessThan(before[c]!)
          expect(afterBad[c]!).toBeGreaterThan(before[c]!)
        }
      }
    }), { numRuns: 300 })
  })
})

describe('causeProbabilities — diode test: near 0 V and OL point to different causes', () => {
  // REFERENCES "Multimeter diode test": a good silicon junction reads 0.40–0.90 V forward and OL
  // reversed; a shorted one reads < 0.050 V both ways; an open one OL both ways.
  const steps: ReasoningStep[] = [
    {
      key: 'forward',
      title: 'D1, red on the anode',
      measurement: { quantity: 'diode_drop', unit: 'V', min: 0.4, max: 0.9 },
      verdicts: { low: { causes: ['d1_shorted'] }, open: { causes: ['d1_open'] } },
    },
    {
      key: 'reverse',
      title: 'D1, red on the cathode',
      measurement: { quantity: 'diode_drop', unit: 'V', openExpected: true },
      verdicts: { low: { causes: ['d1_shorted'] } },
    },
  ]
  const causes: ReasoningCause[] = [
    { key: 'd1_shorted', name: 'D1 shorted', prior: 0.4 },
    { key: 'd1_open', name: 'D1 open', prior: 0.4 },
    { key: 'c1_dried', name: 'C1 dried out', prior: 0.4 },
  ]
  const at = (typed: Record<string, string>) => {
    const observed = recordVerdicts(steps, Object.fromEntries(Object.entries(typed).map(([k, value]) => [k, { value }])))
    return causeProbabilities({ causes, steps, observed })
  }
  const start = at({})

  it('near 0 V both ways: D1 shorted leads, D1 open falls (shorted junction < 0.050 V, common meter beep threshold)', () => {
    const p = at({ forward: '0.004', reverse: '0.003 V' })
    expect(p.used).toEqual([{ stepKey: 'forward', verdict: 'low' }, { stepKey: 'reverse', verdict: 'low' }])
    expect(p.causes[0]!.key).toBe('d1_shorted')
    expect(p.probabilities.d1_shorted!).toBeGreaterThan(0.8)
    expect(p.probabilities.d1_open!).toBeLessThan(start.probabilities.d1_open!)
  })

  it('OL both ways: D1 open leads, D1 shorted falls (open junction OL both ways, meter manuals)', () => {
    const p = at({ forward: 'OL', reverse: 'O.L' })
    expect(p.causes[0]!.key).toBe('d1_open')
    expect(p.probabilities.d1_shorted!).toBeLessThan(start.probabilities.d1_shorted!)
  })

  it('a good junction lowers both (0.58 V forward, OL reversed; meter manuals)', () => {
    const p = at({ forward: '0.58', reverse: 'OL' })
    expect(p.probabilities.d1_shorted!).toBeLessThan(start.probabilities.d1_shorted!)
    expect(p.probabilities.d1_open!).toBeLessThan(start.probabilities.d1_open!)
    expect(p.causes[0]!.key).toBe('c1_dried')
  })
})

describe('causeProbabilities — a cause not listed', () => {
  const causes: ReasoningCause[] = ['a', 'b', 'c'].map(k => ({ key: k, name: `Cause ${k}`, prior: 0.5 }))
  const steps: ReasoningStep[] = causes.map(c => ({
    key: `check_${c.key}`,
    title: `Check ${c.key}`,
    measurement: { quantity: 'dc_voltage', unit: 'V', min: 11.4, max: 12.6 },
    failPointsTo: [c.key],
  }))

  it('good readings everywhere leave real probability on "not listed": 0.4375 (computed by hand from the formula)', () => {
    // Each listed cause: 0.3 · (1/10) · (7/10)² = 0.0147; not listed: 0.1 · (7/10)³ = 0.0343;
    // 0.0343 / (3 · 0.0147 + 0.0343) = 0.4375.
    const observed = Object.fromEntries(steps.map(s => [s.key, 'in_range' as const]))
    const p = causeProbabilities({ causes, steps, observed })
    expect(p.probabilities[UNLISTED_CAUSE]).toBeCloseTo(0.4375, 12)
    expect(p.causes[0]).toMatchObject({ key: UNLISTED_CAUSE, unlisted: true, name: 'a cause not listed here' })
    const total = Object.values(p.probabilities).reduce((a, b) => a + b, 0)
    expect(total).toBeCloseTo(1, 12)
  })

  it('its prior comes from records closed outside the list, smoothed towards 10 % (computed)', () => {
    expect(unlistedPrior()).toBe(0.1)
    expect(unlistedPrior({ records: 45, unlisted: 0 })).toBeCloseTo(0.5 / 50, 15)
    expect(unlistedPrior({ records: 15, unlisted: 5 })).toBeCloseTo(5.5 / 20, 15)
    expect(() => unlistedPrior({ records: 2, unlisted: 3 })).toThrow(RangeError)
  })
})

describe('causeProbabilities — inputs', () => {
  const causes: ReasoningCause[] = [{ key: 'a', name: 'A', prior: 0.9 }, { key: 'b', name: 'B', prior: 0.3 }]
  const steps: ReasoningStep[] = [{ key: 's', title: 'S', failPointsTo: ['a'] }]

  it('falls back on the authors\' priors, and on an even share', () => {
    const p = causeProbabilities({ causes, steps, unlistedPrior: 0 })
    expect(p.probabilities.a).toBeCloseTo(0.75, 15)
    const even = causeProbabilities({ causes: causes.map(c => ({ key: c.key, name: c.name })), steps, unlistedPrior: 0 })
    expect(even.probabilities.a).toBeCloseTo(0.5, 15)
  })

  it('takes the evidence ranking\'s priors over the authors\'', () => {
    const p = causeProbabilities({ causes, steps, priors: { a: 0.2, b: 0.6 }, unlistedPrior: 0 })
    expect(p.probabilities.b).toBeCloseTo(0.75, 15)
  })

  it('leaves out readings of unknown steps and verdicts a step cannot give', () => {
    const p = causeProbabilities({ causes, steps, observed: { s: 'low', gone: 'fail' } })
    expect(p.used).toEqual([])
    expect(p.ignored.map(i => i.stepKey)).toEqual(['s', 'gone'])
  })

  it('refuses a repeated cause and an unlisted prior of 1', () => {
    expect(() => causeProbabilities({ causes: [...causes, causes[0]!], steps })).toThrow(RangeError)
    expect(() => causeProbabilities({ causes, steps, unlistedPrior: 1 })).toThrow(RangeError)
  })
})

describe('describeChange', () => {
  const post = (probabilities: Record<string, number>): Posterior => ({
    probabilities,
    causes: Object.entries(probabilities).map(([key, probability]) => ({ key, name: key === 'br1' ? 'BR1 shorted' : key === 'q1' ? 'Q1 shorted' : 'C4 dried', probability, prior: 0, unlisted: false })),
    used: [],
    ignored: [],
  })

  it('writes the biggest moves as "BR1 shorted 17 % → 64 %"', () => {
    const lines = describeChange(post({ br1: 0.17, q1: 0.5, c4: 0.33 }), post({ br1: 0.64, q1: 0.2, c4: 0.16 }))
    expect(lines.map(l => l.text)).toEqual(['BR1 shorted 17 % → 64 %', 'Q1 shorted 50 % → 20 %', 'C4 dried 33 % → 16 %'])
    expect(describeChange(post({ br1: 0.17, q1: 0.5, c4: 0.33 }), post({ br1: 0.64, q1: 0.2, c4: 0.16 }), { limit: 1 })).toHaveLength(1)
  })

  it('leaves out changes under a percentage point', () => {
    expect(describeChange(post({ br1: 0.5, q1: 0.5 }), post({ br1: 0.505, q1: 0.495 }))).toEqual([])
  })

  it.each([[0, '0 %'], [0.001, '<1 %'], [0.17, '17 %'], [0.996, '>99 %'], [1, '100 %']])('formatProbability(%s) = %s', (p, text) => {
    expect(formatProbability(p)).toBe(text)
  })
})
