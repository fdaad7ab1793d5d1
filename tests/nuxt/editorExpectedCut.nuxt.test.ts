import { mountSuspended } from '@nuxt/test-utils/runtime'
import { beforeEach, describe, expect, it } from 'vitest'
import { nextTick } from 'vue'
import { mockRevision } from './factories'
import EditorExpectedCut from '~/components/editor/EditorExpectedCut.vue'
import { useProcedureDraftStore } from '~/stores/procedureDraft'

// The factory's guide (invented): steps 0 and 1 take meter readings, step 2 passes or fails.
describe('the cut a good unit shows, in the step form', () => {
  let draft: ReturnType<typeof useProcedureDraftStore>
  beforeEach(() => {
    draft = useProcedureDraftStore()
    draft.load(mockRevision())
    draft.discardSetAside()
  })

  it('lets the author choose cuts on a pass / fail step, in the schema\'s order, and clear them', async () => {
    const form = await mountSuspended(EditorExpectedCut, { props: { stepIndex: 2 } })
    expect(form.text()).toContain('Trailing edge')
    await form.get('[data-testid="expected-cut-2-trailing_edge"]').setValue(true)
    await form.get('[data-testid="expected-cut-2-leading_edge"]').setValue(true)
    expect(draft.content.steps[2]!.expectedCut).toEqual(['leading_edge', 'trailing_edge'])
    await form.get('[data-testid="expected-cut-2-leading_edge"]').setValue(false)
    await form.get('[data-testid="expected-cut-2-trailing_edge"]').setValue(false)
    expect(draft.content.steps[2]!.expectedCut).toBeUndefined()
    expect(draft.clientErrors['steps.2.expectedCut']).toBeUndefined()
  })

  it('is not offered on a measured step, and one left over there stops submission at its field', async () => {
    const form = await mountSuspended(EditorExpectedCut, { props: { stepIndex: 0 } })
    expect(form.find('[data-testid="expected-cut-0"]').exists()).toBe(false)
    draft.content.steps[0]!.expectedCut = ['trailing_edge']
    await nextTick()
    expect(form.find('[data-testid="expected-cut-0"]').exists()).toBe(true)
    expect(draft.clientErrors['steps.0.expectedCut']).toMatch(/measurement/)
  })
})
