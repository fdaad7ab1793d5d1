import { mountSuspended } from '@nuxt/test-utils/runtime'
import { afterEach, beforeEach, describe, expect, it, vi } from 'vitest'
import { fakeFetch, mockRecord } from './factories'
import StepCapture from '~/components/captures/StepCapture.vue'
import { useBenchRecordStore } from '~/stores/benchRecord'
import type { CaptureListItemDto } from '#shared/types/captures'
import type { CutType } from '#shared/utils/waveform/analyse'

// Invented bench data: the factory's trailing-edge dimmer guide, whose pass / fail step 'look'
// here names the cut a good unit shows. A working trailing-edge dimmer cuts each half-cycle off
// part-way through (common practice); a shorted bridge diode leaves one half uncut (common practice).

function recordExpecting(expectedCut: CutType[] | undefined) {
  const record = mockRecord()
  const content = record.guide!.content
  record.guide = { ...record.guide!, content: { ...content, steps: content.steps.map(s => (s.key === 'look' ? { ...s, expectedCut } : s)) } }
  return record
}

function capture(id: number, cutType: CutType, dead = false): CaptureListItemDto {
  return {
    id, label: `Mid setting ${id}`, createdAt: '2026-11-02T09:30:00.000Z', uploadedBy: { id: 4, name: 'Ana' },
    record: { id: 7, procedureTitle: 'Dimmer stays dark', unitModel: 'RD-200' }, stepKey: 'look', stepTitle: 'Look for bulging capacitors',
    features: { cutType, dead, vrms: 161, frequencyHz: 50, conductionAngleDeg: { positive: 110, negative: 110 }, asymmetry: 0, thd: 0.4, supplyVrms: 230 },
    events: 0,
  }
}

describe('a capture\'s cut as the answer to its step', () => {
  let bench: ReturnType<typeof useBenchRecordStore>
  const serve = (items: CaptureListItemDto[]) => {
    const { fn } = fakeFetch(url => (url === '/api/captures' ? { data: items, meta: { total: items.length, page: 1, pageSize: 100 } } : Promise.reject(new Error(`unexpected ${url}`))))
    vi.stubGlobal('$fetch', fn)
  }
  beforeEach(() => {
    clearNuxtData()
    bench = useBenchRecordStore()
  })
  afterEach(() => vi.unstubAllGlobals())

  it('says a matching cut passes, and sets the step to pass only when tapped', async () => {
    bench.load(recordExpecting(['trailing_edge']))
    bench.discardSetAside()
    serve([capture(31, 'trailing_edge')])
    const view = await mountSuspended(StepCapture, { props: { recordId: 7, stepKey: 'look', editable: true } })
    const line = view.get('[data-testid="step-capture-cut-31"]')
    expect(line.attributes('data-matches')).toBe('true')
    expect(line.text()).toContain('The cut a good unit shows')
    expect(bench.work.steps.look?.value ?? '').toBe('')
    await view.get('[data-testid="step-capture-take-31"]').trigger('click')
    expect(bench.work.steps.look).toMatchObject({ value: 'pass', done: true })
    expect(bench.readings.look).toMatchObject({ state: 'judged', verdict: 'pass', pass: true })
    expect(view.find('[data-testid="step-capture-take-31"]').exists()).toBe(false)
    expect(view.get('[data-testid="step-capture-taken-31"]').text()).toContain('Passes')
  })

  it('says a different cut fails, naming the expected one, and offers the fail', async () => {
    bench.load(recordExpecting(['trailing_edge']))
    bench.discardSetAside()
    serve([capture(32, 'half_missing')])
    const view = await mountSuspended(StepCapture, { props: { recordId: 7, stepKey: 'look', editable: true } })
    const line = view.get('[data-testid="step-capture-cut-32"]')
    expect(line.attributes('data-matches')).toBe('false')
    expect(line.text()).toContain('Trailing edge')
    await view.get('[data-testid="step-capture-take-32"]').trigger('click')
    expect(bench.readings.look).toMatchObject({ state: 'judged', verdict: 'fail', pass: false })
  })

  it('offers nothing where the step names no cut, and no tap where the record cannot be edited', async () => {
    bench.load(recordExpecting(undefined))
    bench.discardSetAside()
    serve([capture(33, 'trailing_edge')])
    const plain = await mountSuspended(StepCapture, { props: { recordId: 7, stepKey: 'look', editable: true } })
    expect(plain.get('[data-testid="step-capture-item-33"]').text()).toContain('Mid setting 33')
    expect(plain.find('[data-testid="step-capture-cut-33"]').exists()).toBe(false)

    clearNuxtData()
    bench.load(recordExpecting(['trailing_edge']))
    bench.discardSetAside()
    const locked = await mountSuspended(StepCapture, { props: { recordId: 7, stepKey: 'look', editable: false } })
    expect(locked.get('[data-testid="step-capture-cut-33"]').attributes('data-matches')).toBe('true')
    expect(locked.find('[data-testid="step-capture-take-33"]').exists()).toBe(false)
  })
})
