import { describe, expect, it } from 'vitest'
import { OUTCOME_COLOURS, badgeColours, palette } from '../../app/utils/palette'

// WCAG 2.2 §1.4.3 contrast (minimum): relative luminance and contrast ratio as defined in the
// WCAG 2.x glossary; AA needs 4.5:1 for body text.
function luminance(hex: string): number {
  const [r, g, b] = [1, 3, 5].map(i => Number.parseInt(hex.slice(i, i + 2), 16) / 255)
    .map(c => (c <= 0.04045 ? c / 12.92 : ((c + 0.055) / 1.055) ** 2.4))
  return 0.2126 * r! + 0.7152 * g! + 0.0722 * b!
}
const contrast = (a: string, b: string) => {
  const [hi, lo] = [luminance(a), luminance(b)].sort((x, y) => y - x)
  return (hi! + 0.05) / (lo! + 0.05)
}

describe('WCAG contrast of the theme', () => {
  it('matches the WCAG definition on black and white', () => {
    expect(contrast('#000000', '#ffffff')).toBeCloseTo(21, 6) // WCAG 2.x: maximum ratio 21:1
  })
  it.each([
    ['ink on paper', palette.ink.DEFAULT, palette.paper.DEFAULT],
    ['muted ink on paper', palette.ink.muted, palette.paper.DEFAULT],
    ['faint ink on raised paper', palette.ink.faint, palette.paper.raised],
    ['white on accent', palette.accent.ink, palette.accent.DEFAULT],
    ['accent link on paper', palette.accent.DEFAULT, palette.paper.DEFAULT],
    ['in-range verdict', palette.verdict.ok, palette.verdict['ok-soft']],
    ['failing verdict', palette.verdict.fail, palette.verdict['fail-soft']],
    ['open verdict', palette.verdict.open, palette.verdict['open-soft']],
    ['hazard text', palette.hazard.ink, palette.hazard.DEFAULT],
  ])('%s passes AA (4.5:1)', (_, fg, bg) => {
    expect(contrast(fg, bg)).toBeGreaterThanOrEqual(4.5)
  })

  // Badges draw their words in the colour itself, over a tint of it (app/components/app/AppBadge.vue).
  it.each([
    ...Object.entries(palette.state).map(([token, colour]) => [`state "${token}" badge`, colour, 'tint'] as const),
    ...Object.entries(OUTCOME_COLOURS).map(([outcome, colour]) => [`outcome "${outcome}" badge`, colour, 'tint'] as const),
    ['on-the-bench badge', palette.accent.DEFAULT, 'tint'] as const,
    ...(['ok', 'fail', 'open'] as const).flatMap(tone => [
      [`verdict "${tone}" badge`, palette.verdict[tone], 'signal'] as const,
      [`reference badge in "${tone}"`, palette.verdict[tone], 'signal-quiet'] as const,
    ]),
  ])('%s passes AA (4.5:1)', (_, colour, fill) => {
    const c = badgeColours(colour, fill)
    expect(contrast(c.color, c.backgroundColor)).toBeGreaterThanOrEqual(4.5)
  })
})
