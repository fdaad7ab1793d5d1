import { mountSuspended } from '@nuxt/test-utils/runtime'
import { describe, expect, it } from 'vitest'
import { apiError } from './factories'
import AppLoadError from '~/components/app/AppLoadError.vue'
import ReferenceKind from '~/components/captures/ReferenceKind.vue'
import RevisionStateBadge from '~/components/procedure/RevisionStateBadge.vue'
import OutcomeBadge from '~/components/records/OutcomeBadge.vue'
import VerdictBadge from '~/components/records/VerdictBadge.vue'
import { badgeColours, palette } from '~/utils/palette'

// Colours as the element's style holds them, in the palette's own hex.
const colours = (el: Element) => ({ color: (el as HTMLElement).style.color, backgroundColor: (el as HTMLElement).style.backgroundColor })

describe('one badge for states, outcomes, verdicts and references', () => {
  it('draws a revision state in its own colour, with its words', async () => {
    const badge = await mountSuspended(RevisionStateBadge, { props: { state: 'changes_requested' } })
    const el = badge.get('[data-testid="state-changes_requested"]')
    expect(el.text()).toBe('Sent back')
    expect(colours(el.element)).toEqual({ color: palette.state.returned, backgroundColor: badgeColours(palette.state.returned).backgroundColor })
  })

  it.each([
    ['in_progress', null, 'bench', 'On the bench'],
    ['closed', 'repaired', 'repaired', 'Repaired'],
    ['closed', 'not_economical', 'not_economical', 'Not worth repairing'],
  ] as const)('shows a %s record (%s) as %s', async (status, outcome, look, words) => {
    const badge = await mountSuspended(OutcomeBadge, { props: { status, outcome } })
    expect(badge.get(`[data-testid="outcome-${look}"]`).text()).toBe(words)
  })

  it('shows a verdict loud, in words as well as colour', async () => {
    const badge = await mountSuspended(VerdictBadge, { props: { verdict: 'open', pass: true } })
    const el = badge.get('[data-verdict="open"]')
    expect(el.text()).toBe('Open — expected')
    expect(el.attributes('data-pass')).toBe('true')
    expect(colours(el.element)).toEqual({ color: palette.verdict.ok, backgroundColor: palette.verdict['ok-soft'] })
  })

  it('names a reference kind', async () => {
    const badge = await mountSuspended(ReferenceKind, { props: { kind: 'fault' } })
    expect(badge.get('[data-testid="reference-kind-fault"]').attributes('data-kind')).toBe('fault')
  })
})

describe('one panel for what could not be loaded', () => {
  const props = { missing: 'No such record', failed: 'The record could not be loaded', back: { to: '/records', label: 'Back to the records' } }

  it('says "not here" for a 404', async () => {
    const panel = await mountSuspended(AppLoadError, { props: { ...props, error: apiError(404, 'not found') } })
    expect(panel.get('h1').text()).toBe('No such record')
    expect(panel.text()).not.toContain('Try again')
    expect(panel.get('a').attributes('href')).toBe('/records')
  })

  it.each([
    [503, '(503)'],
    [undefined, '(no answer)'],
  ])('says it failed for %s, and to try again', async (status, said) => {
    const panel = await mountSuspended(AppLoadError, { props: { ...props, error: apiError(status, 'away') } })
    expect(panel.get('h1').text()).toBe('The record could not be loaded')
    const line = await mountSuspended(AppLoadError, { props: { ...props, error: apiError(status, 'away'), inline: true } })
    expect(line.get('[role="alert"]').text()).toBe(`The record could not be loaded ${said}. Try again in a moment.`)
  })
})
