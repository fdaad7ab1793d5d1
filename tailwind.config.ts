import type { Config } from 'tailwindcss'

// Benchlore's own palette: warm paper, dark ink, one petrol accent for actions and focus, and
// signal colours kept for verdicts, states and hazards. Ink on paper and white on accent pass
// WCAG AA (checked in tests/unit/theme.test.ts).
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

export default {
  content: ['./app/**/*.{vue,ts,js}', './shared/**/*.ts'],
  theme: {
    extend: {
      colors: palette,
      fontFamily: {
        reading: ['Literata', 'Georgia', 'serif'],
        ui: ['system-ui', '-apple-system', 'Segoe UI', 'Roboto', 'Helvetica Neue', 'Arial', 'sans-serif'],
        mono: ['ui-monospace', 'SFMono-Regular', 'Menlo', 'Consolas', 'monospace'],
      },
      fontSize: {
        label: ['0.8125rem', { lineHeight: '1.1rem', letterSpacing: '0.01em' }],
        body: ['1rem', { lineHeight: '1.6rem' }],
        reading: ['1.0625rem', { lineHeight: '1.75rem' }],
        title: ['1.5rem', { lineHeight: '2rem', letterSpacing: '-0.01em' }],
        display: ['2.125rem', { lineHeight: '2.5rem', letterSpacing: '-0.015em' }],
        verdict: ['1.75rem', { lineHeight: '2.1rem', letterSpacing: '0.01em' }],
      },
      maxWidth: { measure: '68ch' },
      borderRadius: { chip: '0.375rem' },
      boxShadow: { card: '0 1px 0 rgba(31,27,22,0.06), 0 1px 3px rgba(31,27,22,0.08)' },
      spacing: { touch: '2.75rem' },
    },
  },
  plugins: [],
} satisfies Config
