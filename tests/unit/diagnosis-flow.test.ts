import { describe, expect, it } from 'vitest'
import type { ReasoningCause, ReasoningStep, VerdictMap } from '#shared/types/verdicts'
import {
  branchCounts,
  branchStatistics,
  causeProbabilities,
  conclusionWarning,
  flowGraph,
  flowIssues,
  followFlow,
  isFlow,
  orderSteps,
  recordVerdicts,
  UNLISTED_CAUSE,
  validateFlow,
} from '#shared/utils/diagnosis'
import { DIMMER_CAUSES, DIMMER_STEPS } from './fixtures/two-wire-dimmer-flow'

// The two-wire dimmer flow is a fact of the trade (common practice; see the fixture).

const typed = (values: Record<string, string>) => recordVerdicts(DIMMER_STEPS, Object.fromEntries(Object.entries(values).map(([k, value]) => [k, { value }])))

describe('validateFlow — one test per kind of error, exact path and message', () => {
  it('accepts the dimmer flow', () => {
    expect(validateFlow({ causes: DIMMER_CAUSES, steps: DIMMER_STEPS })).toEqual({})
  })

  it.each([
    ['a next that names no step', 2, { low: { conclude: 'bridge_shorted' }, in_range: { next: 's9' } }, {
      'steps.2.verdicts.in_range.next': 'step "Diode-test each bridge diode", if it reads in range: "s9" is not a step of this procedure',
    }],
    ['a conclusion that names no cause', 3, { open: { conclude: 'fuse_blown' }, in_range: { conclude: 'escalate' } }, {
      'steps.3.verdicts.open.conclude': 'step "Check the thermal fuse", if it reads OL: "fuse_blown" is not a cause of this procedure (nor "escalate")',
    }],
    ['a verdict pointing to a cause the procedure does not have', 1, { ...DIMMER_STEPS[1]!.verdicts, high: { causes: ['switch_shorted', 'gate_leak'] } }, {
      'steps.1.verdicts.high.causes.1': 'step "Diode-test the switching device", if it reads high: "gate_leak" is not a cause of this procedure',
    }],
    ['next and conclude on one verdict', 1, { ...DIMMER_STEPS[1]!.verdicts, low: { next: 'bridge', conclude: 'switch_shorted' } }, {
      'steps.1.verdicts.low': 'step "Diode-test the switching device", if it reads low: give either a next step or a conclusion, not both',
    }],
    ['a verdict the step cannot give', 3, { ...DIMMER_STEPS[3]!.verdicts, low: { causes: ['thermal_fuse_open'] }, fail: { next: 'capture' } }, {
      'steps.3.verdicts.low': 'step "Check the thermal fuse" cannot read low: its expected range has no lower limit',
      'steps.3.verdicts.fail': 'step "Check the thermal fuse" cannot read fail: a step with a measurement reads in range, low, high or OL',
    }],
    ['a loop', 3, { open: { conclude: 'thermal_fuse_open' }, in_range: { next: 'switch' } }, {
      'steps.3.verdicts.in_range.next': 'step "Check the thermal fuse", if it reads in range: going back to "Diode-test the switching device" makes a loop (switch → bridge → fuse → switch)',
    }],
    ['a step that sends to itself', 0, { fail: { next: 'switch' }, pass: { next: 'capture' } }, {
      'steps.0.verdicts.pass.next': 'step "Capture the load voltage", if it passes: going back to "Capture the load voltage" makes a loop (capture → capture)',
    }],
  ] as Array<[string, number, VerdictMap, Record<string, string>]>)('%s', (_kind, i, verdicts, errors) => {
    const steps = DIMMER_STEPS.map((s, j) => (j === i ? { ...s, verdicts } : s))
    expect(validateFlow({ causes: DIMMER_CAUSES, steps })).toEqual(errors)
  })

  it('a step no path reaches', () => {
    const extra: ReasoningStep = { key: 'mov', title: 'Check the MOV', measurement: { quantity: 'resistance', unit: 'MΩ', min: 10, openExpected: true } }
    // Both verdicts of the capture say where to go, so a step placed after it is reached by none.
    const steps = [DIMMER_STEPS[0]!, extra, ...DIMMER_STEPS.slice(1)]
    expect(validateFlow({ causes: DIMMER_CAUSES, steps })).toEqual({
      'steps.1': 'step "Check the MOV" cannot be reached from the first step: no verdict leads to it',
    })
  })

  it('a cause keyed "escalate"', () => {
    const causes = [...DIMMER_CAUSES, { key: 'escalate', name: 'Send it on' }]
    expect(validateFlow({ causes, steps: DIMMER_STEPS })).toEqual({ 'causes.3.key': '"escalate" is kept for handing a job on; give this cause another key' })
  })

  it('gives zod-ready paths too', () => {
    const steps = DIMMER_STEPS.map((s, j) => (j === 2 ? { ...s, verdicts: { in_range: { next: 's9' } } } : s))
    expect(flowIssues({ causes: DIMMER_CAUSES, steps })[0]!.path).toEqual(['steps', 2, 'verdicts', 'in_range', 'next'])
  })
})

describe('followFlow — the two-wire dimmer walked two ways', () => {
  it('one half uncontrolled, switch good, a bridge pair near 0 V both ways → bridge diode shorted', () => {
    const verdicts = typed({ capture: 'fail', switch: '0.52', bridge: '0.004' })
    expect(verdicts).toEqual({ capture: 'fail', switch: 'in_range', bridge: 'low' })
    const at = followFlow(DIMMER_STEPS, verdicts)
    expect(at).toMatchObject({ isFlow: true, path: ['capture', 'switch', 'bridge'], concluded: 'bridge_shorted', current: null, ended: false, offPath: ['fuse'] })
  })

  it('switch good, bridge good, thermal fuse OL → thermal fuse open', () => {
    const at = followFlow(DIMMER_STEPS, typed({ capture: 'fail', switch: '0.52 V', bridge: '0.48', fuse: 'OL' }))
    expect(at).toMatchObject({ path: ['capture', 'switch', 'bridge', 'fuse'], concluded: 'thermal_fuse_open', current: null, offPath: [] })
  })

  it('leads to the first step at the start, then to the target of the last verdict', () => {
    expect(followFlow(DIMMER_STEPS, {})).toMatchObject({ path: ['capture'], current: 'capture', concluded: null, offPath: [] })
    expect(followFlow(DIMMER_STEPS, { capture: 'fail' })).toMatchObject({ path: ['capture', 'switch'], current: 'switch' })
  })

  it('greys what can no longer be reached, and keeps off-path readings as evidence', () => {
    const verdicts = { capture: 'pass', bridge: 'low' } as const
    const at = followFlow(DIMMER_STEPS, verdicts)
    expect(at).toMatchObject({ path: ['capture'], concluded: 'escalate', offPath: ['switch', 'bridge', 'fuse'] })
    const p = causeProbabilities({ causes: DIMMER_CAUSES, steps: DIMMER_STEPS, observed: verdicts })
    expect(p.used.map(u => u.stepKey)).toEqual(['capture', 'bridge'])
  })

  it('a verdict with neither next nor conclude goes on to the following step', () => {
    // The switching device reading high has no entry: the flow goes on to the bridge.
    expect(followFlow(DIMMER_STEPS, { capture: 'fail', switch: 'high' })).toMatchObject({ path: ['capture', 'switch', 'bridge'], current: 'bridge' })
  })
})

describe('a linear procedure gives no flow behaviour', () => {
  const causes: ReasoningCause[] = [{ key: 'dried_cap', name: 'Output capacitor dried out' }, { key: 'open_reg', name: 'Regulator open' }]
  const steps: ReasoningStep[] = [
    { key: 'rail', title: 'Measure the 12 V rail', measurement: { quantity: 'dc_voltage', unit: 'V', min: 11.4, max: 12.6 }, failPointsTo: ['open_reg'], minutes: 2 },
    { key: 'esr', title: 'Measure C5', measurement: { quantity: 'capacitance', unit: 'µF', min: 800 }, verdicts: { low: { causes: ['dried_cap'] } }, minutes: 6 },
  ]

  it('is not a flow: no path, no current step, nothing greyed, no validation of reachability', () => {
    expect(isFlow(steps)).toBe(false)
    expect(followFlow(steps, { esr: 'low' })).toEqual({ isFlow: false, path: [], taken: [], concluded: null, ended: false, current: null, offPath: [] })
    expect(validateFlow({ causes, steps })).toEqual({})
  })

  it('orders its steps by the p/c rule instead', () => {
    const order = orderSteps({ steps, probabilities: { dried_cap: 0.7, open_reg: 0.2 } })
    expect(order.map(s => s.stepKey)).toEqual(['esr', 'rail'])
  })
})

describe('conclusionWarning', () => {
  it('warns when the flow concludes a cause the records make unlikely (below 10 %)', () => {
    // The evidence ranking for this device type and symptoms gives the thermal fuse a sliver.
    const priors = { switch_shorted: 0.3, bridge_shorted: 0.699, thermal_fuse_open: 0.001 }
    const verdicts = { capture: 'fail', switch: 'in_range', bridge: 'in_range', fuse: 'open' } as const
    const at = followFlow(DIMMER_STEPS, verdicts)
    const p = causeProbabilities({ causes: DIMMER_CAUSES, steps: DIMMER_STEPS, observed: verdicts, priors })
    const warning = conclusionWarning(at.concluded, p)
    expect(warning).toMatchObject({ cause: 'thermal_fuse_open', favoured: { key: UNLISTED_CAUSE } })
    expect(warning!.probability).toBeLessThan(0.1)
    expect(warning!.message).toMatch(/^The flow concludes “Thermal fuse open”, but the readings and records give it \d+ %; they favour “a cause not listed here” \(\d+ %\)\. Check the readings before confirming\.$/)
    // With the authors' priors alone the same readings agree with the flow.
    const plain = causeProbabilities({ causes: DIMMER_CAUSES, steps: DIMMER_STEPS, observed: verdicts })
    expect(conclusionWarning(at.concluded, plain)).toBeNull()
  })

  it('stays quiet when the probabilities agree, and for escalate', () => {
    const verdicts = { capture: 'fail', switch: 'in_range', bridge: 'low' } as const
    const p = causeProbabilities({ causes: DIMMER_CAUSES, steps: DIMMER_STEPS, observed: verdicts })
    expect(conclusionWarning('bridge_shorted', p)).toBeNull()
    expect(conclusionWarning('escalate', p)).toBeNull()
    expect(conclusionWarning(null, p)).toBeNull()
  })
})

describe('flowGraph', () => {
  const g = flowGraph(DIMMER_STEPS, DIMMER_CAUSES)

  it('has the steps with their expected readings and one end node per conclusion', () => {
    expect(g.isFlow).toBe(true)
    expect(g.start).toBe('step:capture')
    expect(g.nodes.map(n => [n.id, n.kind, n.label])).toEqual([
      ['step:capture', 'step', 'Capture the load voltage'],
      ['step:switch', 'step', 'Diode-test the switching device'],
      ['step:bridge', 'step', 'Diode-test each bridge diode'],
      ['step:fuse', 'step', 'Check the thermal fuse'],
      ['escalate', 'escalate', 'Escalate'],
      ['cause:switch_shorted', 'conclusion', 'Switching device shorted'],
      ['cause:bridge_shorted', 'conclusion', 'Bridge diode shorted'],
      ['end', 'end', 'End of the procedure'],
      ['cause:thermal_fuse_open', 'conclusion', 'Thermal fuse open'],
    ])
    // Expected readings in words (REFERENCES diode test and thermal fuse facts).
    expect(g.nodes.find(n => n.id === 'step:switch')!.expected).toBe('0.4 V – 0.7 V')
    expect(g.nodes.find(n => n.id === 'step:bridge')!.expected).toBe('≥ 50 mV')
    expect(g.nodes.find(n => n.id === 'step:capture')!.expected).toBeNull()
  })

  it('labels edges by verdict and merges verdicts that lead to the same place', () => {
    expect(g.edges.map(e => [e.from, e.to, e.label, e.implicit])).toEqual([
      ['step:capture', 'escalate', 'pass', false],
      ['step:capture', 'step:switch', 'fail', false],
      ['step:switch', 'step:bridge', 'in range / high', false],
      ['step:switch', 'cause:switch_shorted', 'low', false],
      ['step:switch', 'escalate', 'OL', false],
      ['step:bridge', 'step:fuse', 'in range / OL', false],
      ['step:bridge', 'cause:bridge_shorted', 'low', false],
      ['step:fuse', 'escalate', 'in range', false],
      ['step:fuse', 'end', 'high', true],
      ['step:fuse', 'cause:thermal_fuse_open', 'OL', false],
    ])
    expect(g.nodes.find(n => n.id === 'end')).toMatchObject({ kind: 'end', label: 'End of the procedure' })
  })
})

describe('branch statistics', () => {
  it('counts how often each branch was taken and its conclusion confirmed', () => {
    const records = [
      { verdicts: { capture: 'fail', switch: 'in_range', bridge: 'low' }, confirmedCause: 'bridge_shorted' },
      { verdicts: { capture: 'fail', switch: 'in_range', bridge: 'low' }, confirmedCause: 'bridge_shorted' },
      { verdicts: { capture: 'fail', switch: 'in_range', bridge: 'low' }, confirmedCause: 'switch_shorted' },
      { verdicts: { capture: 'fail', switch: 'in_range', bridge: 'in_range', fuse: 'open' }, confirmedCause: 'thermal_fuse_open' },
      { verdicts: { capture: 'pass' }, confirmedCause: null, outcome: 'escalated' },
    ] as const
    const stats = branchStatistics(DIMMER_STEPS, branchCounts(DIMMER_STEPS, records))
    const of = (stepKey: string, verdict: string) => stats.find(s => s.stepKey === stepKey && s.verdict === verdict)!
    expect(of('capture', 'fail')).toMatchObject({ taken: 4, reached: 5, share: 0.8, concludes: null, confirmed: null })
    expect(of('capture', 'pass')).toMatchObject({ taken: 1, concludes: 'escalate', confirmed: 1, confirmedShare: 1 })
    expect(of('bridge', 'low')).toMatchObject({ taken: 3, reached: 4, share: 0.75, concludes: 'bridge_shorted', confirmed: 2 })
    expect(of('bridge', 'low').confirmedShare).toBeCloseTo(2 / 3, 15)
    expect(of('fuse', 'open')).toMatchObject({ taken: 1, reached: 1, confirmed: 1 })
    expect(of('switch', 'low')).toMatchObject({ taken: 0, reached: 4, share: 0, confirmed: 0, confirmedShare: null })
    expect(stats).toHaveLength(12)
  })
})
