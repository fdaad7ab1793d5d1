import { mountSuspended } from '@nuxt/test-utils/runtime'
import { afterEach, beforeEach, describe, expect, it, vi } from 'vitest'
import { nextTick } from 'vue'
import { apiError, fakeFetch, mockRecord } from './factories'
import ReadingInput from '~/components/records/ReadingInput.vue'
import SaveConflict from '~/components/records/SaveConflict.vue'
import AppSaveStatus from '~/components/app/AppSaveStatus.vue'
import { useBenchRecordStore } from '~/stores/benchRecord'
import type { RecordDto } from '#shared/types/records'

/** A stand-in for the record routes, holding one record and its version the way the server does. */
function fakeRecordServer(start: RecordDto) {
  const server = { record: structuredClone(start) }
  const fake = fakeFetch((url, { method, body }) => {
    if (url !== `/api/records/${server.record.id}` || method !== 'PATCH') throw apiError(500, `unexpected ${method} ${url}`)
    if (body.version !== server.record.version) throw apiError(409, 'saved elsewhere', { current: structuredClone(server.record) })
    const steps = Object.fromEntries(Object.entries(body.steps as RecordDto['steps']).map(([k, s]) => [k, { ...s, result: { value: s.value, verdict: null, pass: null, display: null, error: null, raises: [], question: null, suggestion: null } }]))
    server.record = { ...server.record, unit: body.unit, notes: body.notes, steps, version: server.record.version + 1 }
    return { record: structuredClone(server.record) }
  })
  return { server, ...fake }
}

describe('the bench record on the guided view', () => {
  let bench: ReturnType<typeof useBenchRecordStore>
  beforeEach(() => {
    bench = useBenchRecordStore()
    bench.load(mockRecord())
    bench.discardSetAside()
  })
  afterEach(() => vi.unstubAllGlobals())

  // The spec windows are those of the factory's guide: a silicon body diode reads 0.4–0.7 V on
  // the diode range (common practice); the potentiometer is 470 kΩ ± 20 % (376–564 kΩ).
  it.each([
    ['fet-diode', '0.58', 'in_range', true],
    ['fet-diode', '0.05', 'low', false],
    ['fet-diode', 'OL', 'open', false],
    ['pot', '4k7', 'low', false],
    ['pot', '470k', 'in_range', true],
  ])('judges %s read as %s: %s', async (key, value, verdict, pass) => {
    bench.stepWork(key).value = value
    expect(bench.readings[key]).toMatchObject({ state: 'judged', verdict, pass })
  })

  it('says what it cannot read, and judges a check from its words', () => {
    bench.stepWork('fet-diode').value = 'about half'
    expect(bench.readings['fet-diode']).toMatchObject({ state: 'unreadable' })
    bench.stepWork('look').value = 'fail'
    expect(bench.readings.look).toMatchObject({ state: 'judged', verdict: 'fail', pass: false })
  })

  it('shows the verdict beside the input as it is typed', async () => {
    const step = mockRecord().guide!.content.steps[0]!
    const input = await mountSuspended(ReadingInput, { props: { step, modelValue: '0.05', causeNames: { 'shorted-fet': 'Shorted switching MOSFET' } } })
    expect(input.get('[data-testid="verdict-fet-diode"]').attributes('data-state')).toBe('low')
    expect(input.get('[data-testid="reading-raises-fet-diode"]').text()).toContain('Shorted switching MOSFET')
    await input.setProps({ modelValue: '0.61' })
    expect(input.get('[data-testid="verdict-fet-diode"]').attributes('data-state')).toBe('in_range')
  })

  describe('saving', () => {
    it('sends the work with the version it was based on, and takes the new version', async () => {
      const { server, calls, fn } = fakeRecordServer(mockRecord())
      vi.stubGlobal('$fetch', fn)
      bench.stepWork('fet-diode').value = '0.58'
      bench.stepWork('fet-diode').done = true
      await nextTick()
      expect(bench.status).toBe('pending')
      expect(await bench.save()).toBe(true)
      expect(calls).toHaveLength(1)
      expect(calls[0]!.body).toMatchObject({ version: 3, steps: { 'fet-diode': { value: '0.58', done: true } } })
      expect(bench.version).toBe(4)
      expect(server.record.steps['fet-diode']?.value).toBe('0.58')
      expect(bench.status).toBe('saved')
    })

    it('on a stale version keeps both copies; keeping mine saves it over the other', async () => {
      const { server, calls, fn } = fakeRecordServer(mockRecord())
      vi.stubGlobal('$fetch', fn)
      // Saved from another tab first.
      server.record = { ...server.record, version: 4, notes: 'from the other tab' }
      bench.stepWork('pot').value = '470k'
      await nextTick()
      expect(await bench.save()).toBe(false)
      expect(bench.status).toBe('conflict')
      expect(bench.conflict?.mine.steps.pot?.value).toBe('470k')
      expect(bench.conflict?.theirs.notes).toBe('from the other tab')

      const panel = await mountSuspended(SaveConflict)
      expect(panel.get('[data-testid="record-conflict"]').text()).toContain('Step 2 reading')
      await panel.get('[data-testid="conflict-keep-mine"]').trigger('click')
      await vi.waitFor(() => expect(bench.status).toBe('saved'))
      expect(calls.at(-1)!.body.version).toBe(4)
      expect(server.record.steps.pot?.value).toBe('470k')
      expect(server.record.version).toBe(5)
    })

    it('taking the saved copy sets this one aside, and it can be brought back', async () => {
      const { server, fn } = fakeRecordServer(mockRecord())
      vi.stubGlobal('$fetch', fn)
      server.record = { ...server.record, version: 4, notes: 'from the other tab' }
      bench.work.notes = 'typed here'
      await nextTick()
      await bench.save()
      await bench.takeTheirs()
      expect(bench.work.notes).toBe('from the other tab')
      expect(bench.setAside?.notes).toBe('typed here')
      expect(bench.status).toBe('saved')
      bench.restoreSetAside()
      expect(bench.work.notes).toBe('typed here')
      expect(bench.setAside).toBeNull()
    })

    it.each([
      ['says what the server said', apiError(503, 'The database is not reachable just now.'), 'The database is not reachable just now.'],
      ['says when the server was not reached', apiError(undefined, 'fetch failed'), 'The server could not be reached.'],
    ])('on a failure %s, and offers to try again', async (_label, error, message) => {
      vi.stubGlobal('$fetch', vi.fn(async () => {
        throw error
      }))
      bench.work.notes = 'a note'
      await nextTick()
      expect(await bench.save()).toBe(false)
      expect(bench.failure).toBe(message)
      const status = await mountSuspended(AppSaveStatus, { props: { status: bench.status, savedAt: bench.savedAt, failure: bench.failure, testPrefix: 'record-save', conflictText: '' } })
      expect(status.get('[data-testid="record-save-status"]').attributes('data-state')).toBe('failed')
      expect(status.get('[data-testid="record-save-status"]').text()).toContain(message)
      expect(status.find('[data-testid="record-save-retry"]').exists()).toBe(true)
    })

    it('does not save a record its user cannot edit', async () => {
      const { calls, fn } = fakeRecordServer(mockRecord())
      vi.stubGlobal('$fetch', fn)
      bench.load(mockRecord({ can: { edit: false, close: false, amend: false } }))
      bench.work.notes = 'not mine'
      await nextTick()
      expect(await bench.save()).toBe(false)
      expect(calls).toHaveLength(0)
    })
  })
})
