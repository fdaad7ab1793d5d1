import { mountSuspended } from '@nuxt/test-utils/runtime'
import { describe, expect, it } from 'vitest'
import { mockFlowContent, mockGuideContent, mockRevision } from './factories'
import RevisionComparison from '~/components/procedure/RevisionComparison.vue'
import { compareContents } from '#shared/utils/compare'
import type { RevisionComparisonDto } from '#shared/types/procedure-api'

function comparison(a = mockGuideContent(), b = mockFlowContent()): RevisionComparisonDto {
  const { content: _c, rendered: _r, comments: _m, attachments: _a, labels: _l, procedure: _p, can: _k, ...summary } = mockRevision()
  return { a: { ...summary, id: 1, number: 1 }, b: { ...summary, id: 2, number: 2 }, ...compareContents(a, b) }
}

describe('comparing two revisions', () => {
  it('says each changed branch in words, and shows no key', async () => {
    const view = await mountSuspended(RevisionComparison, { props: { comparison: comparison() } })
    const low = view.get('[data-testid="field-change-steps-fet-diode-verdicts.low"]')
    expect(low.text()).toContain('If it reads low')
    expect(low.text()).toContain('Was → on to the following step, now → confirms Shorted switching MOSFET')
    const inRange = view.get('[data-testid="field-change-steps-fet-diode-verdicts.in_range"]')
    expect(inRange.text()).toContain('now → step 2')
    expect(view.text()).not.toMatch(/shorted-fet|open-pot|dry-cap|diode_drop/)
  })

  it('marks a changed value whole, not from its first changed digit', async () => {
    const before = mockGuideContent()
    const after = mockGuideContent()
    after.steps[0]!.measurement = { ...after.steps[0]!.measurement!, min: 0.45 }
    const view = await mountSuspended(RevisionComparison, { props: { comparison: comparison(before, after) } })
    const reading = view.get('[data-testid="field-change-steps-fet-diode-measurement"]')
    expect(reading.findAll('del').map(d => d.text())).toEqual(['[removed: 0.4]'])
    expect(reading.findAll('ins').map(d => d.text())).toEqual(['[added: 0.45]'])
  })
})
