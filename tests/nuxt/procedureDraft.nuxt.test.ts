import { mountSuspended } from '@nuxt/test-utils/runtime'
import { afterEach, beforeEach, describe, expect, it, vi } from 'vitest'
import { nextTick } from 'vue'
import { apiError, fakeFetch, mockGuideContent, mockRevision } from './factories'
import EditorCauseList from '~/components/editor/EditorCauseList.vue'
import EditorErrorSummary from '~/components/editor/EditorErrorSummary.vue'
import EditorFlowPreview from '~/components/editor/EditorFlowPreview.vue'
import EditorHazardChoice from '~/components/editor/EditorHazardChoice.vue'
import EditorStepVerdicts from '~/components/editor/EditorStepVerdicts.vue'
import { setVerdictTarget, toggleVerdictCause } from '~/utils/procedureDraft'
import { useProcedureDraftStore } from '~/stores/procedureDraft'
import { DEFAULT_PRIOR } from '#shared/types/procedure'

describe('the procedure draft in the editor', () => {
  let draft: ReturnType<typeof useProcedureDraftStore>
  beforeEach(() => {
    draft = useProcedureDraftStore()
    draft.load(mockRevision())
    draft.discardSetAside()
  })
  afterEach(() => vi.unstubAllGlobals())

  it('adds a cause with the schema\'s default prior, and the form shows it', async () => {
    const list = await mountSuspended(EditorCauseList)
    await list.get('[data-testid="add-cause"]').trigger('click')
    const i = draft.content.causes.length - 1
    expect(draft.content.causes[i]).toEqual({ key: `cause_${i + 1}`, name: '', detail: '', prior: DEFAULT_PRIOR })
    expect((list.get(`[data-testid="cause-prior-${i}"]`).element as HTMLInputElement).value).toBe(String(DEFAULT_PRIOR))
  })

  it('keeps what verdicts say in step with the causes and steps they name', () => {
    const step = draft.content.steps[0]!
    draft.addCause()
    // A new cause's key follows its name, and so do the verdicts that name it.
    toggleVerdictCause(step, 'low', draft.content.causes.map(c => c.key), 'cause_4', true)
    setVerdictTarget(step, 'open', 'conclude:cause_4')
    draft.renameCause(3, 'Gate resistor R7 open')
    expect(step.verdicts?.low?.causes).toEqual(['shorted-fet', 'gate_resistor_r7_open'])
    expect(step.verdicts?.open).toEqual({ causes: ['shorted-fet'], conclude: 'gate_resistor_r7_open' })
    draft.removeCause(3)
    expect(step.verdicts?.low).toEqual({ causes: ['shorted-fet'] })
    expect(step.verdicts?.open).toEqual({ causes: ['shorted-fet'] })
    // A removed step is no longer led to: the verdict goes on to the following step.
    setVerdictTarget(step, 'in_range', 'next:look')
    draft.removeStep(2)
    expect(step.verdicts?.in_range).toBeUndefined()
  })

  it('sets per verdict the causes and where it leads, by name, with no key in sight', async () => {
    const card = await mountSuspended(EditorStepVerdicts, { props: { stepIndex: 1 } })
    const rows = card.findAll('[data-testid^="verdict-row-1-"]').map(r => r.attributes('data-testid'))
    // 470 kΩ ± 20 %: a window with both ends, so in range, low, high and OL.
    expect(rows).toEqual(['verdict-row-1-in_range', 'verdict-row-1-low', 'verdict-row-1-high', 'verdict-row-1-open'])
    await card.get('[data-testid="verdict-cause-1-low-2"]').trigger('click')
    expect(draft.content.steps[1]!.verdicts?.low?.causes).toEqual(['open-pot', 'dry-cap'])
    await card.get('[data-testid="verdict-then-1-open"]').setValue('conclude:open-pot')
    expect(draft.content.steps[1]!.verdicts?.open?.conclude).toBe('open-pot')
    const options = card.get('[data-testid="verdict-then-1-open"]').findAll('option').map(o => o.text())
    expect(options).toContain('This confirms: Open control potentiometer')
    expect(options).toContain('Go to step 1: Diode-test the MOSFET body diode')
    expect(card.text()).not.toMatch(/open-pot|shorted-fet|dry-cap/)
  })

  it('shows a verdict that names the following step as going on to it', async () => {
    draft.content.steps[0]!.verdicts = { in_range: { next: draft.content.steps[1]!.key } }
    const card = await mountSuspended(EditorStepVerdicts, { props: { stepIndex: 0 } })
    const select = card.get('[data-testid="verdict-then-0-in_range"]')
    expect((select.element as HTMLSelectElement).value).toBe('')
    expect(select.findAll('option').map(o => o.text())).not.toContainEqual(expect.stringMatching(/no longer in this procedure/))
    expect(select.findAll('option')[0]!.text()).toBe('Go on to step 2')
  })

  it('hides the keys of causes and steps', async () => {
    const list = await mountSuspended(EditorCauseList)
    draft.addCause()
    draft.renameCause(3, 'Gate resistor R7 open')
    await nextTick()
    expect(list.find('[data-testid^="cause-key-"]').exists()).toBe(false)
    expect(list.text()).not.toContain('gate_resistor_r7_open')
  })

  it('draws the flow as it is written and marks a broken branch at once', async () => {
    const preview = await mountSuspended(EditorFlowPreview)
    expect(preview.find('[data-testid="flow-preview-none"]').exists()).toBe(true)
    setVerdictTarget(draft.content.steps[0]!, 'low', 'conclude:shorted-fet')
    await vi.waitFor(() => expect(preview.find('[data-testid="flow-node-cause:shorted-fet"]').exists()).toBe(true))
    expect(preview.find('[data-testid="flow-preview-issues"]').exists()).toBe(false)
    // The last step sent back to the first: a loop.
    setVerdictTarget(draft.content.steps[2]!, 'fail', 'next:fet-diode')
    await vi.waitFor(() => expect(preview.find('[data-testid="flow-edge-step:look->step:fet-diode"]').exists()).toBe(true))
    expect(preview.get('[data-testid="flow-edge-step:look->step:fet-diode"]').attributes('data-state')).toBe('broken')
    expect(preview.get('[data-testid="flow-preview-issues"]').text()).toMatch(/makes a loop/)
  })

  it('moves and removes parts, and attaches, orders and detaches a step\'s photos', () => {
    draft.addPart()
    draft.addPart()
    draft.content.parts[0]!.name = 'MOSFET'
    draft.content.parts[1]!.name = 'Pad'
    draft.movePart(1, 0)
    expect(draft.content.parts.map(p => p.name)).toEqual(['Pad', 'MOSFET'])
    draft.removePart(0)
    expect(draft.content.parts.map(p => p.name)).toEqual(['MOSFET'])

    const photo = (id: number) => ({ id, url: `/api/files/${id}`, thumbnailUrl: `/api/files/${id}?size=thumb`, width: 640, height: 480, caption: '' })
    draft.attachImage(0, photo(5))
    draft.attachImage(0, photo(6))
    draft.attachImage(0, photo(5))
    expect(draft.content.steps[0]!.imageIds).toEqual([5, 6])
    draft.moveImage(0, 1, 0)
    expect(draft.content.steps[0]!.imageIds).toEqual([6, 5])
    draft.detachImage(0, 6)
    expect(draft.content.steps[0]!.imageIds).toEqual([5])
    expect(draft.attachments['6']).toBeDefined()
  })

  it('ticks hazards the way the schema allows: "none" stands alone', async () => {
    const choice = await mountSuspended(EditorHazardChoice)
    await choice.get('[data-testid="hazard-heat"]').setValue(true)
    expect(draft.content.hazards).toEqual(['mains', 'heat'])
    await choice.get('[data-testid="hazard-none"]').setValue(true)
    expect(draft.content.hazards).toEqual(['none'])
  })

  it('shows an error once its field was visited, or every error after a submit', async () => {
    draft.content.steps[0]!.title = 'x'
    await nextTick()
    expect(draft.clientErrors['steps.0.title']).toBeDefined()
    expect(draft.visibleErrors['steps.0.title']).toBeUndefined()
    draft.touch('steps.0.title')
    expect(draft.visibleErrors['steps.0.title']).toBeDefined()

    draft.content.causes = []
    draft.showAllErrors = true
    const summary = await mountSuspended(EditorErrorSummary, { props: { errors: draft.visibleErrors, message: 'Not ready' } })
    expect(summary.get('[data-testid="error-link-steps.0.title"]').text()).toBe('Step 1 (x) · title')
    expect(summary.get('[data-testid="error-link-causes"]').text()).toBe('Causes')
  })

  describe('submitting', () => {
    it('saves what is pending, then submits a complete revision', async () => {
      const { calls, fn } = fakeFetch((url, { method }) => {
        if (method === 'PUT') return { revision: { id: 41, version: 5 } }
        if (url === '/api/revisions/41/submit') return { revision: { id: 41, number: 3, state: 'in_review' } }
        throw apiError(500, `unexpected ${method} ${url}`)
      })
      vi.stubGlobal('$fetch', fn)
      draft.content.summary = 'Why the MOSFET goes first.'
      await nextTick()
      expect(await draft.submit()).toEqual({ ok: true, number: 3 })
      expect(calls.map(c => `${c.method} ${c.url}`)).toEqual(['PUT /api/revisions/41', 'POST /api/revisions/41/submit'])
      expect(calls[0]!.body).toMatchObject({ version: 4, content: { summary: 'Why the MOSFET goes first.' } })
    })

    it('does not submit an incomplete revision, and shows every error', async () => {
      const { calls, fn } = fakeFetch(() => ({ revision: { id: 41, version: 5 } }))
      vi.stubGlobal('$fetch', fn)
      draft.load(mockRevision({ content: mockGuideContent({ steps: [] }) }))
      const result = await draft.submit()
      expect(result.ok).toBe(false)
      expect(calls).toHaveLength(0)
      expect(draft.visibleErrors.steps).toBe('add at least one test step')
    })

    it('shows the fields the server refused', async () => {
      vi.stubGlobal('$fetch', vi.fn(async () => {
        throw apiError(422, 'Not ready for review: deviceType: unknown device type', { fields: { deviceType: 'unknown device type "rotary-led-dimmer-trailing-edge"' } })
      }))
      const result = await draft.submit()
      expect(result).toEqual({ ok: false, message: 'Not ready for review: deviceType: unknown device type' })
      expect(draft.visibleErrors.deviceType).toContain('unknown device type')
    })
  })
})
