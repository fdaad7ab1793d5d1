import { describe, expect, it } from 'vitest'
import {
  addToStats,
  causeProbabilities,
  emptyStats,
  judgeCheck,
  recordContribution,
  recordVerdicts,
  UNLISTED_CAUSE,
} from '#shared/utils/diagnosis'
import type { ClosedRecordInput } from '#shared/utils/diagnosis'
import { DIMMER_CAUSES, DIMMER_STEPS } from './fixtures/two-wire-dimmer-flow'

const start = '2025-03-04T09:00:00Z'
const at = (min: number) => new Date(Date.parse(start) + min * 60_000).toISOString()

function closed(values: Record<string, string>, confirmedCause: string | null, outcome = 'repaired'): ClosedRecordInput {
  const keys = Object.keys(values)
  return {
    steps: DIMMER_STEPS,
    causes: DIMMER_CAUSES,
    entries: Object.fromEntries(keys.map(k => [k, { value: values[k] }])),
    confirmedCause,
    outcome,
    startedAt: start,
    readingTimes: keys.map((k, i) => ({ stepKey: k, at: at(5 * (i + 1)) })),
  }
}

describe('judgeCheck', () => {
  it.each([['pass', 'pass'], ['OK', 'pass'], ['good', 'pass'], ['✓', 'pass'], ['fail', 'fail'], ['Failed', 'fail'], ['bad', 'fail'], ['maybe', null], ['', null]])('%s → %s', (text, verdict) => {
    expect(judgeCheck(text)).toBe(verdict)
  })
})

describe('recordVerdicts', () => {
  it('judges each typed step the way the bench does (REFERENCES diode test: < 0.050 V shorted)', () => {
    expect(recordVerdicts(DIMMER_STEPS, { capture: { value: 'fail' }, switch: { value: '0.52' }, bridge: { value: '0.004 V' }, fuse: { value: '' } }))
      .toEqual({ capture: 'fail', switch: 'in_range', bridge: 'low' })
  })

  it('gives no verdict to unreadable text or a reading questioned as a slip (580MV for 580 mV, SI Brochure Table 7)', () => {
    expect(recordVerdicts(DIMMER_STEPS, { capture: { value: 'hmm' }, switch: { value: '520MV' }, fuse: { value: '4x7' } })).toEqual({})
  })
})

describe('recordContribution and addToStats', () => {
  const bridgeJob = closed({ capture: 'fail', switch: '0.52', bridge: '0.004' }, 'bridge_shorted')

  it('turns a closed record into its verdicts, minutes, cause and branches', () => {
    expect(recordContribution(bridgeJob)).toEqual({
      cause: 'bridge_shorted',
      verdicts: { capture: 'fail', switch: 'in_range', bridge: 'low' },
      minutes: { capture: 5, switch: 5, bridge: 5 },
      branches: [
        { stepKey: 'capture', verdict: 'fail', confirmed: false },
        { stepKey: 'switch', verdict: 'in_range', confirmed: false },
        { stepKey: 'bridge', verdict: 'low', confirmed: true },
      ],
    })
  })

  it('counts a cause outside the list, or none, as not listed; escalation confirms an escalate branch', () => {
    expect(recordContribution(closed({ capture: 'fail' }, 'other-procedure-cause')).cause).toBe(UNLISTED_CAUSE)
    const passedOn = recordContribution(closed({ capture: 'pass' }, null, 'escalated'))
    expect(passedOn).toMatchObject({ cause: UNLISTED_CAUSE, branches: [{ stepKey: 'capture', verdict: 'pass', confirmed: true }] })
  })

  it('adds and takes away a record, and refuses to take away what was never added', () => {
    let stats = addToStats(emptyStats(), recordContribution(bridgeJob))
    stats = addToStats(stats, recordContribution(closed({ capture: 'pass' }, null, 'escalated')))
    expect(stats).toMatchObject({
      records: 2,
      unlisted: 1,
      verdicts: { bridge: { low: { bridge_shorted: 1 } }, capture: { fail: { bridge_shorted: 1 }, pass: { [UNLISTED_CAUSE]: 1 } } },
      minutes: { capture: { 5: 2 }, bridge: { 5: 1 } },
      branches: { bridge: { low: { taken: 1, confirmed: 1 } }, capture: { pass: { taken: 1, confirmed: 1 } } },
    })
    const amended = addToStats(stats, recordContribution(bridgeJob), -1)
    expect(amended).toMatchObject({ records: 1, unlisted: 1, verdicts: { bridge: { low: { bridge_shorted: 0 } } } })
    expect(stats.records).toBe(2)
    expect(() => addToStats(emptyStats(), recordContribution(bridgeJob), -1)).toThrow(RangeError)
  })

  it('records that disagree with the author outweigh the author (learning)', () => {
    // The author says a shorted bridge shows as a low bridge reading. Twenty invented records
    // confirm a shorted bridge whose bridge step read in range, so that reading must stop
    // ruling the cause out.
    let stats = emptyStats()
    for (let i = 0; i < 20; i++) {
      stats = addToStats(stats, recordContribution(closed({ capture: 'fail', switch: '0.52', bridge: '0.5' }, 'bridge_shorted')))
      stats = addToStats(stats, recordContribution(closed({ capture: 'fail', switch: '0.52', bridge: '0.5' }, 'switch_shorted')))
    }
    const common = { causes: DIMMER_CAUSES, steps: DIMMER_STEPS, observed: { bridge: 'in_range' } as const, unlistedPrior: 0.1 }
    const authorOnly = causeProbabilities(common).probabilities.bridge_shorted!
    const learned = causeProbabilities({ ...common, stats }).probabilities.bridge_shorted!
    // Computed by hand from the formula. Priors 0.9 · (5, 6, 3)/14 and 0.1 for "not listed";
    // bridge in range: author alone 7/9, 1/9, 7/9, 7/9 → 8.23 %; with the records the shorted
    // bridge gets (20 + 1)/(20 + 6 + 3) = 21/29 and the switch 27/29 → 34.64 %.
    expect(authorOnly).toBeCloseTo(0.0823171, 6)
    expect(learned).toBeCloseTo(0.3463888, 6)
  })
})
