import { describe, expect, it } from 'vitest'
import { describeVerdicts, possibleVerdicts, StepMinutes, StepReasoningFields, DraftStepReasoningFields, VerdictMap, verdictCauses, verdictsOf } from '#shared/types/verdicts'
import type { ReasoningStep } from '#shared/types/verdicts'
import { z } from 'zod'
import { DIMMER_CAUSES, DIMMER_STEPS } from './fixtures/two-wire-dimmer-flow'

// Good silicon junction forward 0.40–0.90 V (REFERENCES "Multimeter diode test", meter manuals).
const diode = { quantity: 'diode_drop', unit: 'V', min: 0.4, max: 0.9 } as const

describe('verdict map schema', () => {
  it('accepts causes, next and conclude per verdict', () => {
    const map = { low: { causes: ['bridge_shorted'], conclude: 'bridge_shorted' }, in_range: { next: 'fuse' }, open: { conclude: 'escalate' } }
    expect(VerdictMap.parse(map)).toEqual(map)
  })

  it('refuses a verdict the product does not know and a key that is not a key', () => {
    expect(VerdictMap.safeParse({ shorted: { causes: ['x'] } }).success).toBe(false)
    const bad = VerdictMap.safeParse({ low: { causes: ['Bridge Shorted'] } })
    expect(bad.success).toBe(false)
    if (!bad.success) expect(bad.error.issues[0]!.path).toEqual(['low', 'causes', 0])
  })

  it('takes minutes above 0 and up to a working day', () => {
    expect(StepMinutes.safeParse(0.5).success).toBe(true)
    expect(StepMinutes.safeParse(0).success).toBe(false)
    expect(StepMinutes.safeParse(-3).success).toBe(false)
    expect(StepMinutes.safeParse(481).success).toBe(false)
  })

  it('extends a step schema, strict when published and loose in a draft', () => {
    const Step = z.object({ key: z.string() }).extend(StepReasoningFields)
    expect(Step.safeParse({ key: 's1', verdicts: { low: { next: 's2' } }, minutes: 4 }).success).toBe(true)
    expect(Step.safeParse({ key: 's1', minutes: 0 }).success).toBe(false)
    const Draft = z.object({ key: z.string() }).extend(DraftStepReasoningFields)
    const draft = Draft.parse({ key: 's1', verdicts: { low: { next: 'Half Typed' }, bogus: {} }, minutes: 0 })
    expect(draft.verdicts).toEqual({ low: { next: 'Half Typed' } })
  })
})

describe('possibleVerdicts (the verdicts evaluateReading can give)', () => {
  it.each([
    [{ ...diode }, ['in_range', 'low', 'high', 'open']],
    [{ quantity: 'diode_drop', unit: 'V', min: 0.05 }, ['in_range', 'low', 'open']],
    [{ quantity: 'continuity', unit: 'Ω', max: 1 }, ['in_range', 'high', 'open']],
    [{ quantity: 'resistance', unit: 'kΩ', nominal: 4.7, tolerancePct: 5 }, ['in_range', 'low', 'high', 'open']],
    [{ quantity: 'resistance', unit: 'Ω', openExpected: true }, ['low', 'open']],
    [undefined, ['pass', 'fail']],
  ] as Array<[ReasoningStep['measurement'], string[]]>)('%o → %o', (measurement, verdicts) => {
    expect(possibleVerdicts({ measurement })).toEqual(verdicts)
  })
})

describe('verdictsOf', () => {
  it('spreads failPointsTo over every failing verdict (the shorthand)', () => {
    const map = verdictsOf({ measurement: diode, failPointsTo: ['d1_failed'] })
    expect(map.in_range).toMatchObject({ passing: true, causes: [], declared: false })
    for (const v of ['low', 'high', 'open'] as const) expect(map[v]).toMatchObject({ passing: false, causes: ['d1_failed'], declared: true })
  })

  it('lets a verdict name its own causes over the shorthand, and [] mean none', () => {
    const step = { measurement: diode, failPointsTo: ['d1_failed'], verdicts: { low: { causes: ['d1_shorted'] }, high: { causes: [] } } }
    expect(verdictCauses(step, 'low')).toEqual(['d1_shorted'])
    expect(verdictCauses(step, 'high')).toEqual([])
    expect(verdictCauses(step, 'open')).toEqual(['d1_failed'])
    expect(verdictCauses(step, 'pass')).toEqual([])
  })

  it('counts a concluded cause among the verdict causes, but not escalate', () => {
    const map = verdictsOf(DIMMER_STEPS[1]!)
    expect(map.low).toMatchObject({ causes: ['switch_shorted'], conclude: 'switch_shorted' })
    expect(map.open).toMatchObject({ causes: [], conclude: 'escalate' })
    expect(map.in_range).toMatchObject({ causes: [], next: 'bridge', passing: true })
  })

  it('treats open as passing where open is expected (a thermal fuse that must have blown; common practice)', () => {
    const map = verdictsOf({ measurement: { quantity: 'resistance', unit: 'Ω', openExpected: true }, failPointsTo: ['gate_short'] })
    expect(map.open).toMatchObject({ passing: true, causes: [] })
    expect(map.low).toMatchObject({ passing: false, causes: ['gate_short'] })
  })
})

describe('describeVerdicts (words for review)', () => {
  it('says what each declared verdict means', () => {
    const step = { measurement: diode, verdicts: { low: { causes: ['bridge_shorted'] }, open: { causes: ['bridge_open', 'bridge_shorted'] } } }
    const causes = [{ key: 'bridge_shorted', name: 'bridge diode shorted' }, { key: 'bridge_open', name: 'bridge diode open' }]
    expect(describeVerdicts(step, causes)).toEqual([
      'if it reads low: bridge diode shorted',
      'if it reads OL: bridge diode open or bridge diode shorted',
    ])
  })

  it('names next steps and conclusions of the dimmer flow', () => {
    expect(describeVerdicts(DIMMER_STEPS[1]!, DIMMER_CAUSES, DIMMER_STEPS)).toEqual([
      'if it reads in range: go to “Diode-test each bridge diode”',
      'if it reads low: concludes Switching device shorted',
      'if it reads OL: escalate',
    ])
    expect(describeVerdicts(DIMMER_STEPS[0]!, DIMMER_CAUSES, DIMMER_STEPS)).toEqual([
      'if it passes: escalate',
      'if it fails: go to “Diode-test the switching device”',
    ])
  })
})
