import { describe, expect, it } from 'vitest'
import { makeContent } from '../helpers/content'
import { DraftContent, RevisionContent } from '../../shared/types/procedure'
import { describeZodError } from '../../shared/utils/validation'
import { cutVerdict } from '../../shared/utils/cut-verdict'

// Invented test procedure (tests/helpers/content.ts): two measured steps, then a capture step
// judged pass or fail. A working trailing-edge dimmer cuts each half-cycle off part-way through
// (common practice), so its capture shows a trailing-edge cut.
const captureStep = { key: 'capture', title: 'Capture the load voltage', instruction: 'Probe across the load at mid setting.' }
const withStep = (step: Record<string, unknown>) => {
  const base = makeContent()
  return { ...base, steps: [...base.steps!, { ...captureStep, ...step }] }
}
const fieldErrors = (content: unknown) => {
  const parsed = RevisionContent.safeParse(content)
  return parsed.success ? {} : describeZodError(parsed.error).fields
}

describe('the cut a good unit shows, on a step', () => {
  it('is accepted on a pass / fail step, and kept', () => {
    const parsed = RevisionContent.parse(withStep({ expectedCut: ['trailing_edge'] }))
    expect(parsed.steps[2]!.expectedCut).toEqual(['trailing_edge'])
    expect(RevisionContent.parse(withStep({})).steps[2]!.expectedCut).toBeUndefined()
  })

  it.each([
    ['on a step with a measurement', (c: ReturnType<typeof makeContent>) => ({ ...c, steps: c.steps!.map((s, i) => (i === 0 ? { ...s, expectedCut: ['trailing_edge'] } : s)) }), 'steps.0.expectedCut', /measurement/],
    ['an unknown cut type', () => withStep({ expectedCut: ['reverse_phase'] }), 'steps.2.expectedCut', /leading_edge/],
    ['an empty list', () => withStep({ expectedCut: [] }), 'steps.2.expectedCut', /at least one/],
    ['a cut chosen twice', () => withStep({ expectedCut: ['none', 'none'] }), 'steps.2.expectedCut', /twice/],
  ])('is refused at submission %s, naming the field', (_label, make, path, message) => {
    const errors = fieldErrors(make(makeContent()))
    expect(Object.keys(errors)).toEqual([path])
    expect(errors[path]).toMatch(message)
  })

  it('is kept loosely in a draft, so autosave never refuses it', () => {
    const draft = DraftContent.parse(withStep({ expectedCut: [], measurement: { quantity: 'ac_voltage', unit: 'V' } }))
    expect(draft.steps[2]!.expectedCut).toEqual([])
    expect(DraftContent.safeParse(withStep({ expectedCut: ['not_yet_known'] })).success).toBe(true)
  })
})

describe('a capture\'s cut as the step\'s verdict', () => {
  const live = (cutType: 'none' | 'leading_edge' | 'trailing_edge' | 'half_missing' | 'irregular') => ({ cutType, dead: false })

  it.each([
    // A working trailing-edge dimmer shows a trailing-edge cut (common practice).
    [['trailing_edge'], live('trailing_edge'), { matches: true, verdict: 'pass' }],
    // A shorted bridge diode passes one half-cycle uncut (common practice): not what a good unit shows.
    [['trailing_edge'], live('half_missing'), { matches: false, verdict: 'fail' }],
    [['trailing_edge'], live('leading_edge'), { matches: false, verdict: 'fail' }],
    [['leading_edge', 'trailing_edge'], live('leading_edge'), { matches: true, verdict: 'pass' }],
    // At full setting a dimmer passes the whole sine (common practice).
    [['none'], live('none'), { matches: true, verdict: 'pass' }],
  ] as const)('expected %j, capture %j gives %j', (expected, features, result) => {
    expect(cutVerdict(expected, features)).toEqual(result)
  })

  it('never passes a load with no voltage, even where a full sine is expected', () => {
    // The analysis reports a dead load with cut type 'none' (shared/utils/waveform/analyse.ts).
    expect(cutVerdict(['none'], { cutType: 'none', dead: true })).toEqual({ matches: false, verdict: 'fail' })
  })

  it('gives no verdict where the step expects no cut', () => {
    expect(cutVerdict(undefined, live('trailing_edge'))).toBeNull()
    expect(cutVerdict([], live('trailing_edge'))).toBeNull()
  })
})
