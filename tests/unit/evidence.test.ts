import fc from 'fast-check'
import { describe, expect, it } from 'vitest'
import { describeSupport, logSumExp, naiveBayesScores, rankCauses } from '#shared/utils/evidence'
import type { CauseEvidence, NaiveBayesClass } from '#shared/utils/evidence'

// Mitchell, Machine Learning, McGraw-Hill 1997, Table 3.2: training examples for PlayTennis.
const ATTRIBUTES = ['outlook', 'temperature', 'humidity', 'wind'] as const
type Attribute = (typeof ATTRIBUTES)[number]
type Day = Record<Attribute, string> & { playTennis: 'yes' | 'no' }
const PLAY_TENNIS: Day[] = [
  ['sunny', 'hot', 'high', 'weak', 'no'],
  ['sunny', 'hot', 'high', 'strong', 'no'],
  ['overcast', 'hot', 'high', 'weak', 'yes'],
  ['rain', 'mild', 'high', 'weak', 'yes'],
  ['rain', 'cool', 'normal', 'weak', 'yes'],
  ['rain', 'cool', 'normal', 'strong', 'no'],
  ['overcast', 'cool', 'normal', 'strong', 'yes'],
  ['sunny', 'mild', 'high', 'weak', 'no'],
  ['sunny', 'cool', 'normal', 'weak', 'yes'],
  ['rain', 'mild', 'normal', 'weak', 'yes'],
  ['sunny', 'mild', 'normal', 'strong', 'yes'],
  ['overcast', 'mild', 'high', 'strong', 'yes'],
  ['overcast', 'hot', 'normal', 'weak', 'yes'],
  ['rain', 'mild', 'high', 'strong', 'no'],
].map(([outlook, temperature, humidity, wind, playTennis]) => ({ outlook, temperature, humidity, wind, playTennis }) as Day)

/** Counts the training table into the scorer's input for one query. */
function countPlayTennis(query: Record<Attribute, string>): { classes: NaiveBayesClass[], featureCardinalities: number[] } {
  const classes = (['yes', 'no'] as const).map((label) => {
    const days = PLAY_TENNIS.filter(d => d.playTennis === label)
    return { key: label, count: days.length, featureCounts: ATTRIBUTES.map(a => days.filter(d => d[a] === query[a]).length) }
  })
  const featureCardinalities = ATTRIBUTES.map(a => new Set(PLAY_TENNIS.map(d => d[a])).size)
  return { classes, featureCardinalities }
}

function byKey<T extends { key: string }>(rows: T[], key: string): T {
  const row = rows.find(r => r.key === key)
  if (!row) throw new Error(`no row ${key}`)
  return row
}

describe('naiveBayesScores — Mitchell, Machine Learning (1997), §6.9.1', () => {
  const query = { outlook: 'sunny', temperature: 'cool', humidity: 'high', wind: 'strong' }

  it('counts Table 3.2 as the book does (9 yes, 5 no; cardinalities 3, 3, 2, 2)', () => {
    const { classes, featureCardinalities } = countPlayTennis(query)
    expect(PLAY_TENNIS).toHaveLength(14)
    expect(classes.map(c => c.count)).toEqual([9, 5])
    expect(featureCardinalities).toEqual([3, 3, 2, 2])
  })

  it('reproduces the unsmoothed scores: yes = 0.0052910, no = 0.0205714, P(no|x) = 0.79542 (Mitchell §6.9.1)', () => {
    const scores = naiveBayesScores({ ...countPlayTennis(query), smoothing: 'none' })
    const yes = byKey(scores, 'yes')
    const no = byKey(scores, 'no')
    expect(yes.score).toBeCloseTo(0.0052910, 7) // Mitchell §6.9.1; = 1/189
    expect(no.score).toBeCloseTo(0.0205714, 7) // Mitchell §6.9.1; = 18/875
    expect(no.posterior).toBeCloseTo(0.79542, 5) // Mitchell §6.9.1 (0.795)
    expect(yes.posterior + no.posterior).toBeCloseTo(1, 12)
    expect(yes.logScore).toBeCloseTo(Math.log(1 / 189), 12)
  })

  it('reproduces the Laplace add-one scores: yes = 0.0070838, no = 0.0182216, P(no|x) = 0.72007 (computed; Mitchell m-estimate with m = k, p = 1/k)', () => {
    const scores = naiveBayesScores({ ...countPlayTennis(query), smoothing: 'laplace' })
    expect(byKey(scores, 'yes').score).toBeCloseTo(0.0070838, 7) // computed: 6/847
    expect(byKey(scores, 'no').score).toBeCloseTo(0.0182216, 7) // computed: 25/1372
    expect(byKey(scores, 'no').posterior).toBeCloseTo(0.72007, 5) // computed
  })

  it('guards log(0): a value never seen with a class rules it out without smoothing (Table 3.2: overcast never with "no")', () => {
    const scores = naiveBayesScores({ ...countPlayTennis({ outlook: 'overcast', temperature: 'hot', humidity: 'high', wind: 'weak' }), smoothing: 'none' })
    const no = byKey(scores, 'no')
    expect(no).toMatchObject({ score: 0, logScore: -Infinity, posterior: 0 })
    expect(byKey(scores, 'yes').posterior).toBe(1)
    const smoothed = naiveBayesScores({ ...countPlayTennis({ outlook: 'overcast', temperature: 'hot', humidity: 'high', wind: 'weak' }), smoothing: 'laplace' })
    expect(byKey(smoothed, 'no').posterior).toBeGreaterThan(0)
  })
})

describe('naiveBayesScores — Bayes rule for a two-class test, s·π / (s·π + f·(1 − π))', () => {
  // Natural frequencies: a population of N split by the prior, then by the test result.
  function screening(population: number, prior: number, sensitivity: number, falsePositive: number) {
    const ill = population * prior
    const well = population - ill
    return naiveBayesScores({
      classes: [
        { key: 'condition', count: ill, featureCounts: [ill * sensitivity] },
        { key: 'no_condition', count: well, featureCounts: [well * falsePositive] },
      ],
      featureCardinalities: [2],
      smoothing: 'none',
    })
  }

  it.each([
    [0.005, 0.99, 0.01, 0.332215, 'Bayes rule in closed form, 0.99·0.005 / (0.99·0.005 + 0.01·0.995), a standard textbook screening example'],
    [0.01, 0.8, 0.1, 0.074766, 'Rice, Mathematical Statistics and Data Analysis, 3rd ed.: 1 %, 80 %, 10 %'],
  ])('prior %s, sensitivity %s, false positives %s → %s (%s)', (prior, sensitivity, falsePositive, expected) => {
    for (const population of [100_000, 1]) {
      const posterior = byKey(screening(population, prior, sensitivity, falsePositive), 'condition').posterior
      expect(posterior).toBeCloseTo(expected, 6)
    }
  })
})

describe('naiveBayesScores — input checks', () => {
  it('refuses counts that cannot be', () => {
    expect(() => naiveBayesScores({ classes: [{ key: 'a', count: 2, featureCounts: [3] }], featureCardinalities: [2], smoothing: 'none' })).toThrow(RangeError)
    expect(() => naiveBayesScores({ classes: [{ key: 'a', count: 2, featureCounts: [1, 1] }], featureCardinalities: [2], smoothing: 'none' })).toThrow(RangeError)
    expect(() => naiveBayesScores({ classes: [{ key: 'a', count: -1, featureCounts: [0] }], featureCardinalities: [2], smoothing: 'none' })).toThrow(RangeError)
  })

  it('log-sum-exp survives scores far below double range (definition: log Σ e^x)', () => {
    expect(logSumExp([-1000, -1000])).toBeCloseTo(-1000 + Math.log(2), 12)
    expect(logSumExp([Math.log(0.25), Math.log(0.5)])).toBeCloseTo(Math.log(0.75), 12)
    expect(logSumExp([-Infinity, -Infinity])).toBe(-Infinity)
  })
})

// Demo data below is invented (phase-cut dimmer faults); the checks are of the ranking contract.
const cause = (id: string, label: string, prior: number | undefined, confirmed: number, symptomHits: Record<string, number> = {}): CauseEvidence =>
  ({ id, label, prior, confirmed, symptomHits })

describe('rankCauses — the product ranking', () => {
  it('follows the author priors when there are no records', () => {
    const ranked = rankCauses({
      causes: [cause('snubber', 'Snubber capacitor dried out', 0.2, 0), cause('triac', 'Triac shorted', 0.6, 0), cause('pot', 'Worn potentiometer', 0.4, 0)],
      symptoms: ['flicker-at-low-setting'],
      totalRecords: 0,
    })
    expect(ranked.map(r => r.id)).toEqual(['triac', 'pot', 'snubber'])
    // With N = 0 every P(s|c) is 1/2, so the posteriors are the normalised priors 0.5, 1/3, 1/6.
    expect(ranked.map(r => r.posterior)).toEqual([0.5, 1 / 3, 1 / 6].map(p => expect.closeTo(p, 12)))
    expect(ranked.every(r => r.support === 'no closed jobs name a cause yet')).toBe(true)
  })

  it('matches the formula on a hand-worked case (computed from the contract)', () => {
    // P(A) = (14 + 5·0.5)/(20 + 5) = 0.66, P(buzz|A) = (10 + 1)/(14 + 2) = 0.6875 → 0.45375
    // P(B) = (6 + 5·0.5)/(20 + 5) = 0.34, P(buzz|B) = (1 + 1)/(6 + 2) = 0.25 → 0.085
    // posterior A = 0.45375 / 0.53875 = 0.842227...
    const ranked = rankCauses({
      causes: [cause('a', 'Choke saturated', 0.3, 14, { buzz: 10 }), cause('b', 'Loose terminal', 0.3, 6, { buzz: 1 })],
      symptoms: ['buzz'],
      totalRecords: 20,
    })
    expect(ranked[0]).toMatchObject({ id: 'a', confirmed: 14, of: 20, support: 'found in 14 of 20 closed jobs' })
    expect(ranked[0]!.logScore).toBeCloseTo(Math.log(0.45375), 12)
    expect(ranked[1]!.logScore).toBeCloseTo(Math.log(0.085), 12)
    expect(ranked[0]!.posterior).toBeCloseTo(0.45375 / 0.53875, 12)
  })

  it('lets a cause confirmed far more often overtake a higher prior as records grow', () => {
    const leaderAfter = (records: number) => rankCauses({
      causes: [
        cause('triac', 'Triac shorted', 0.9, Math.round(records * 0.2)),
        cause('driver', 'LED driver incompatible', 0.1, Math.round(records * 0.8)),
      ],
      symptoms: [],
      totalRecords: records,
    })[0]!.id
    expect(leaderAfter(0)).toBe('triac')
    const leaders = Array.from({ length: 41 }, (_, n) => leaderAfter(n))
    const firstOvertake = leaders.indexOf('driver')
    expect(firstOvertake).toBeGreaterThan(0)
    expect(leaders.slice(firstOvertake).every(id => id === 'driver')).toBe(true)
  })

  it('posteriors sum to 1 and are sorted (property)', () => {
    const evidence = fc.array(
      fc.record({
        prior: fc.option(fc.double({ min: 0.01, max: 1, noNaN: true }), { nil: undefined }),
        confirmed: fc.nat({ max: 200 }),
        hitShare: fc.double({ min: 0, max: 1, noNaN: true }),
      }),
      { minLength: 1, maxLength: 12 },
    )
    fc.assert(fc.property(evidence, fc.nat({ max: 50 }), fc.nat({ max: 4 }), (rows, extraRecords, symptomCount) => {
      const symptoms = Array.from({ length: symptomCount }, (_, i) => `symptom-${i}`)
      const causes = rows.map((r, i) => cause(`c${i}`, `Cause ${i}`, r.prior, r.confirmed,
        Object.fromEntries(symptoms.map((s, j) => [s, Math.floor(r.confirmed * r.hitShare / (j + 1))]))))
      const totalRecords = rows.reduce((sum, r) => sum + r.confirmed, 0) + extraRecords
      const ranked = rankCauses({ causes, symptoms, totalRecords })
      expect(ranked).toHaveLength(causes.length)
      expect(ranked.reduce((sum, r) => sum + r.posterior, 0)).toBeCloseTo(1, 9)
      for (let i = 1; i < ranked.length; i++) expect(ranked[i - 1]!.posterior).toBeGreaterThanOrEqual(ranked[i]!.posterior - 1e-12)
    }), { numRuns: 200 })
  })

  it('words the support line', () => {
    expect(describeSupport(14, 20)).toBe('found in 14 of 20 closed jobs')
    expect(describeSupport(1, 1)).toBe('found in 1 of 1 closed job')
    expect(describeSupport(0, 3)).toBe('found in 0 of 3 closed jobs')
    expect(describeSupport(0, 0)).toBe('no closed jobs name a cause yet')
    const [only] = rankCauses({ causes: [cause('x', 'Cracked solder joint', 1, 3)], symptoms: [], totalRecords: 7 })
    expect(only).toMatchObject({ support: 'found in 3 of 7 closed jobs', posterior: 1 })
  })

  it('raises a cause when the observed symptom co-occurs with it', () => {
    const causes = [
      cause('snubber', 'Snubber capacitor dried out', 0.5, 10, { 'flicker-at-low-setting': 9, 'buzz': 1 }),
      cause('triac', 'Triac shorted', 0.5, 10, { 'flicker-at-low-setting': 1, 'buzz': 2 }),
    ]
    const posteriorOf = (symptoms: string[]) => rankCauses({ causes, symptoms, totalRecords: 20 }).find(r => r.id === 'snubber')!.posterior
    expect(posteriorOf([])).toBeCloseTo(0.5, 12)
    expect(posteriorOf(['flicker-at-low-setting'])).toBeGreaterThan(posteriorOf([]))
    expect(posteriorOf(['flicker-at-low-setting', 'buzz'])).toBeLessThan(posteriorOf(['flicker-at-low-setting']))
    // A symptom typed twice counts once.
    expect(posteriorOf(['flicker-at-low-setting', 'flicker-at-low-setting'])).toBe(posteriorOf(['flicker-at-low-setting']))
  })

  it('breaks ties by label whatever the input order', () => {
    const a = cause('z-id', 'Blown fuse', 0.5, 2)
    const b = cause('a-id', 'Open track', 0.5, 2)
    for (const causes of [[a, b], [b, a]]) {
      expect(rankCauses({ causes, symptoms: [], totalRecords: 4 }).map(r => r.label)).toEqual(['Blown fuse', 'Open track'])
    }
  })

  it('gives causes without a prior an even share', () => {
    const none = rankCauses({ causes: [cause('a', 'A', undefined, 0), cause('b', 'B', undefined, 0), cause('c', 'C', undefined, 0)], symptoms: [], totalRecords: 0 })
    expect(none.map(r => r.posterior)).toEqual([1 / 3, 1 / 3, 1 / 3].map(p => expect.closeTo(p, 12)))
    // A missing prior takes the mean of the given ones: weights 0.8, 0.2, 0.5 → 0.8/1.5, 0.2/1.5, 0.5/1.5.
    const some = rankCauses({ causes: [cause('a', 'A', 0.8, 0), cause('b', 'B', 0.2, 0), cause('c', 'C', undefined, 0)], symptoms: [], totalRecords: 0 })
    expect(some.map(r => [r.id, r.posterior])).toEqual([['a', expect.closeTo(0.8 / 1.5, 12)], ['c', expect.closeTo(0.5 / 1.5, 12)], ['b', expect.closeTo(0.2 / 1.5, 12)]])
  })

  it('with priorWeight 0 the counts alone set P(c) = n_c / N', () => {
    const ranked = rankCauses({ causes: [cause('a', 'A', 0.99, 3), cause('b', 'B', 0.01, 7), cause('c', 'C', 0.5, 0)], symptoms: [], totalRecords: 10, priorWeight: 0 })
    expect(ranked.map(r => [r.id, r.posterior])).toEqual([['b', expect.closeTo(0.7, 12)], ['a', expect.closeTo(0.3, 12)], ['c', 0]])
    expect(ranked[2]!.logScore).toBe(-Infinity)
  })

  it('returns nothing for no causes and refuses inconsistent counts', () => {
    expect(rankCauses({ causes: [], symptoms: ['buzz'], totalRecords: 5 })).toEqual([])
    expect(() => rankCauses({ causes: [cause('a', 'A', 0.5, 2, { buzz: 3 })], symptoms: ['buzz'], totalRecords: 5 })).toThrow(RangeError)
    expect(() => rankCauses({ causes: [cause('a', 'A', 0.5, 2), cause('a', 'A again', 0.5, 1)], symptoms: [], totalRecords: 5 })).toThrow(RangeError)
    expect(() => rankCauses({ causes: [cause('a', 'A', 0.5, 2)], symptoms: [], totalRecords: 5, priorWeight: -1 })).toThrow(RangeError)
  })
})
