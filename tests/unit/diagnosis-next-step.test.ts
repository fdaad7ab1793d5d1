import fc from 'fast-check'
import { describe, expect, it } from 'vitest'
import type { ReasoningStep } from '#shared/types/verdicts'
import {
  DEFAULT_STEP_MINUTES,
  expectedStepMinutes,
  histogramTotal,
  LONGEST_STEP_GAP_MINUTES,
  medianOfHistogram,
  minutesPerStep,
  orderSteps,
} from '#shared/utils/diagnosis'
import { seededRandom } from '#shared/utils/random'
import { DIMMER_STEPS } from './fixtures/two-wire-dimmer-flow'

/** Expected cost of inspecting in this order: Σ cᵢ · P(not found before i) (Kadane & Simon 1977). */
function expectedCost(order: Array<{ p: number, c: number }>): number {
  let cost = 0
  let found = 0
  for (const { p, c } of order) {
    cost += c * (1 - found)
    found += p
  }
  return cost
}

function permutations<T>(xs: T[]): T[][] {
  if (xs.length <= 1) return [xs]
  return xs.flatMap((x, i) => permutations([...xs.slice(0, i), ...xs.slice(i + 1)]).map(rest => [x, ...rest]))
}

/** One step per cause group: step i reveals exactly the causes assigned to it. */
function instance(ps: number[], cs: number[], owner: number[]) {
  const steps: ReasoningStep[] = cs.map((c, i) => ({
    key: `s${i}`,
    title: `Step ${i}`,
    minutes: c,
    failPointsTo: owner.flatMap((o, k) => (o === i ? [`c${k}`] : [])),
  }))
  const probabilities = Object.fromEntries(ps.map((p, k) => [`c${k}`, p]))
  const stepP = cs.map((_, i) => owner.reduce((sum, o, k) => sum + (o === i ? ps[k]! : 0), 0))
  return { steps, probabilities, stepP }
}

describe('orderSteps — the p/c rule', () => {
  it('the hand check: p = 0.5, 0.3, 0.2; c = 5, 1, 2 → step 2 first, 4.9 min against 5.9 (REFERENCES; Kadane & Simon 1977)', () => {
    const { steps, probabilities } = instance([0.5, 0.3, 0.2], [5, 1, 2], [0, 1, 2])
    const order = orderSteps({ steps, probabilities })
    expect(order.map(s => s.stepKey)).toEqual(['s1', 's0', 's2'])
    expect(order[0]).toMatchObject({ stepKey: 's1', title: 'Step 1', minutes: 1, minutesFrom: 'author', findsFault: 0.3 })
    expect(expectedCost(order.map(s => ({ p: s.findsFault, c: s.minutes })))).toBeCloseTo(4.9, 12)
    expect(expectedCost([{ p: 0.5, c: 5 }, { p: 0.3, c: 1 }, { p: 0.2, c: 2 }])).toBeCloseTo(5.9, 12)
    // The tie (ratio 0.1 for steps 1 and 3) costs the same either way: 1 + 0.7·2 + 0.5·5 = 4.9.
    expect(expectedCost([{ p: 0.3, c: 1 }, { p: 0.2, c: 2 }, { p: 0.5, c: 5 }])).toBeCloseTo(4.9, 12)
  })

  it('equals the cheapest of every order on random instances of up to 7 steps, each cause revealed by one step (brute force, computed)', () => {
    fc.assert(fc.property(fc.integer({ min: 1, max: 2 ** 31 - 1 }), (seed) => {
      const rand = seededRandom(seed)
      const n = 1 + Math.floor(rand() * 7)
      const causes = 1 + Math.floor(rand() * 8)
      const weights = Array.from({ length: causes }, () => rand())
      // Up to a fifth of the mass may lie on a cause no step reveals ("not listed").
      const listed = 0.8 + rand() * 0.2
      const total = weights.reduce((a, b) => a + b, 0)
      const ps = weights.map(w => (listed * w) / total)
      const cs = Array.from({ length: n }, () => (rand() < 0.3 ? 1 + Math.floor(rand() * 10) : 0.5 + rand() * 20))
      const owner = ps.map(() => Math.floor(rand() * n))
      const { steps, probabilities, stepP } = instance(ps, cs, owner)
      const chosen = orderSteps({ steps, probabilities }).map(s => Number(s.stepKey.slice(1)))
      const costOf = (order: number[]) => expectedCost(order.map(i => ({ p: stepP[i]!, c: cs[i]! })))
      const best = Math.min(...permutations([...Array(n).keys()]).map(costOf))
      expect(costOf(chosen)).toBeLessThanOrEqual(best + 1e-9)
    }), { numRuns: 200 })
  })

  it('leaves out steps already read and puts steps that can find nothing last, in order', () => {
    const probabilities = { switch_shorted: 0.3, bridge_shorted: 0.5, thermal_fuse_open: 0.1 }
    const order = orderSteps({ steps: DIMMER_STEPS, probabilities, observed: { capture: 'fail' } })
    // switch 0.3/4, bridge 0.5/8, fuse 0.1/3 (concluded causes count as found).
    expect(order.map(s => [s.stepKey, s.findsFault])).toEqual([['switch', 0.3], ['bridge', 0.5], ['fuse', 0.1]])
    const none = orderSteps({ steps: [{ key: 'look', title: 'Look' }, ...DIMMER_STEPS.slice(3)], probabilities: {} })
    expect(none.map(s => s.stepKey)).toEqual(['look', 'fuse'])
  })

  it('takes the median recorded time once five records have it', () => {
    const step = DIMMER_STEPS[2]!
    const few = { minutes: { bridge: { 2: 4 } } }
    const many = { minutes: { bridge: { 2: 4, 30: 1 } } }
    expect(orderSteps({ steps: [step], probabilities: {}, stats: few })[0]).toMatchObject({ minutes: 8, minutesFrom: 'author' })
    expect(orderSteps({ steps: [step], probabilities: {}, stats: many })[0]).toMatchObject({ minutes: 2, minutesFrom: 'records' })
    expect(orderSteps({ steps: [{ key: 'x', title: 'X' }], probabilities: {} })[0]).toMatchObject({ minutes: DEFAULT_STEP_MINUTES, minutesFrom: 'default' })
  })
})

describe('medianOfHistogram', () => {
  /** numpy.median's definition: sort, take the middle value or the mean of the two middle values. */
  function median(values: number[]): number {
    const s = [...values].sort((a, b) => a - b)
    const mid = Math.floor(s.length / 2)
    return s.length % 2 ? s[mid]! : (s[mid - 1]! + s[mid]!) / 2
  }

  it('equals the median of the listed values (numpy.median definition, property)', () => {
    fc.assert(fc.property(fc.array(fc.integer({ min: 1, max: 90 }), { minLength: 1, maxLength: 60 }), (values) => {
      const histogram: Record<string, number> = {}
      for (const v of values) histogram[v] = (histogram[v] ?? 0) + 1
      expect(medianOfHistogram(histogram)).toBe(median(values))
      expect(histogramTotal(histogram)).toBe(values.length)
    }))
  })

  it('reads examples by hand: {3: 2, 5: 1, 12: 1} → 4, {7: 3} → 7, empty → null', () => {
    expect(medianOfHistogram({ 3: 2, 5: 1, 12: 1 })).toBe(4)
    expect(medianOfHistogram({ 7: 3 })).toBe(7)
    expect(medianOfHistogram({})).toBeNull()
    expect(medianOfHistogram({ 4: 0 })).toBeNull()
  })

  it('refuses a negative count and a value that is not a number', () => {
    expect(() => medianOfHistogram({ 3: -1 })).toThrow(RangeError)
    expect(() => medianOfHistogram({ abc: 1 })).toThrow(RangeError)
  })

  it('expectedStepMinutes: records, then the author, then the default', () => {
    expect(expectedStepMinutes({ minutes: 3 }, { 4: 6 })).toEqual({ minutes: 4, from: 'records' })
    expect(expectedStepMinutes({ minutes: 3 }, { 4: 4 })).toEqual({ minutes: 3, from: 'author' })
    expect(expectedStepMinutes({}, { 4: 4 })).toEqual({ minutes: DEFAULT_STEP_MINUTES, from: 'default' })
  })
})

describe('minutesPerStep', () => {
  const start = '2025-03-04T09:00:00Z'
  const at = (min: number) => new Date(Date.parse(start) + min * 60_000).toISOString()

  it('times each reading from the one before, the first from the start', () => {
    expect(minutesPerStep(start, [
      { stepKey: 'capture', at: at(6) },
      { stepKey: 'bridge', at: at(10.3) },
      { stepKey: 'fuse', at: at(10.4) },
    ])).toEqual({ capture: 6, bridge: 4, fuse: 1 })
  })

  it('sums a step read twice, sorts by time, and leaves out a long pause', () => {
    expect(minutesPerStep(Date.parse(start), [
      { stepKey: 'bridge', at: at(12) },
      { stepKey: 'switch', at: at(5) },
      { stepKey: 'switch', at: at(8) },
      { stepKey: 'fuse', at: at(12 + LONGEST_STEP_GAP_MINUTES + 1) },
    ])).toEqual({ switch: 8, bridge: 4 })
  })

  it('refuses a time it cannot read', () => {
    expect(() => minutesPerStep(start, [{ stepKey: 'x', at: 'yesterday' }])).toThrow(/reading 1 \(x\) is not a valid time/)
  })
})
