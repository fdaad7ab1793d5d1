import type { RevisionState } from '../../shared/types/procedure'
import type { Outcome } from '../../shared/types/records'

// Relative imports: nuxt.config.ts reads the palette too (the installed app's colours), outside
// the app's path aliases.

// Benchlore's own palette: warm paper, dark ink, one petrol accent for actions and focus, and
// signal colours kept for verdicts, states and hazards. tailwind.config.ts makes these the
// colour tokens; components that draw with colours themselves (badges, charts, the hazard
// symbol) read them here. Ink on paper and white on accent pass WCAG AA
// (tests/unit/theme.test.ts).
export const palette = {
  paper: { DEFAULT: '#f6f1e7', raised: '#fffdf8', sunk: '#ece4d4', rule: '#d6cab4' },
  ink: { DEFAULT: '#1f1b16', muted: '#554c41', faint: '#6f6557' },
  accent: { DEFAULT: '#0d5c68', hover: '#0a4953', soft: '#d7e9ea', ink: '#ffffff' },
  verdict: {
    'ok': '#17683a', 'ok-soft': '#dcefe1',
    'fail': '#a3231b', 'fail-soft': '#f8e0dc',
    'open': '#6a4a00', 'open-soft': '#f5e8c7',
  },
  state: {
    draft: '#5b5247', review: '#7a4b00', live: '#17683a', returned: '#8a3b12', declined: '#a3231b', past: '#6f6557',
  },
  hazard: { DEFAULT: '#f9c80e', ink: '#111111', soft: '#fff4c2' },
} as const

export type StateToken = keyof typeof palette.state
export type VerdictTone = 'ok' | 'fail' | 'open'

/** The colour of each revision state, by its token. */
export const REVISION_STATE_TOKENS: Record<RevisionState, StateToken> = {
  draft: 'draft',
  in_review: 'review',
  published: 'live',
  superseded: 'past',
  changes_requested: 'returned',
  rejected: 'declined',
}

/** The colour of each record outcome (the dashboard's outcome bars use the same). */
export const OUTCOME_COLOURS: Record<Outcome, string> = {
  repaired: palette.state.live,
  not_economical: palette.state.returned,
  escalated: palette.state.review,
  no_fault_found: palette.state.past,
}

/** A share of one colour over another, as an opaque colour (`#rrggbb`). */
export function tint(hex: string, share: number, over: string): string {
  const channel = (h: string, i: number) => Number.parseInt(h.slice(i, i + 2), 16)
  return `#${[1, 3, 5].map(i => Math.round(channel(hex, i) * share + channel(over, i) * (1 - share)).toString(16).padStart(2, '0')).join('')}`
}

/**
 * How a badge takes its colour. `tint`: the colour as text over a pale opaque tint of itself on
 * raised paper (text keeps AA contrast on any surface); `signal`: a verdict colour over its own
 * soft token, with a full-strength edge; `signal-quiet`: the same with a half-strength edge.
 */
export type BadgeFill = 'tint' | 'signal' | 'signal-quiet'

export interface BadgeColours { color: string, borderColor: string, backgroundColor: string }

export function badgeColours(colour: string, fill: BadgeFill = 'tint'): BadgeColours {
  if (fill === 'tint') return { color: colour, borderColor: tint(colour, 0.45, palette.paper.raised), backgroundColor: tint(colour, 0.1, palette.paper.raised) }
  const soft = softOf(colour)
  return { color: colour, borderColor: fill === 'signal' ? colour : tint(colour, 0.5, soft), backgroundColor: soft }
}

function softOf(colour: string): string {
  for (const tone of ['ok', 'fail', 'open'] as const) if (palette.verdict[tone] === colour) return palette.verdict[`${tone}-soft`]
  return tint(colour, 0.1, palette.paper.raised)
}
