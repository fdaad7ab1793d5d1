import { mountSuspended } from '@nuxt/test-utils/runtime'
import { afterEach, beforeEach, describe, expect, it, vi } from 'vitest'
import { nextTick } from 'vue'
import { apiError, fakeFetch, mockGuideContent, mockRevision } from './factories'
import EditorCauseList from '~/components/editor/EditorCauseList.vue'
import EditorErrorSummary from '~/components/editor/EditorErrorSummary.vue'
import EditorHazardChoice from '~/components/editor/EditorHazardChoice.vue'
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

  it('keeps pointers in the order of the cause list, and drops them with the cause', () => {
    const step = draft.content.steps[2]!
    draft.addCause()
    draft.renameCause(3, 'Gate resistor R7 open')
    draft.moveCause(3, 0)
    expect(draft.content.causes.map(c => c.key)).toEqual(['gate_resistor_r7_open', 'shorted-fet', 'open-pot', 'dry-cap'])
    step.failPointsTo = ['dry-cap']
    draft.removeCause(3)
    expect(step.failPointsTo).toEqual([])
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
