import type { Config } from 'tailwindcss'
import { palette } from './app/utils/palette'

// The palette lives in app/utils/palette.ts, where the app reads it too; exported here as well
// for the waveform plot, which reads it from this file.
export { palette }

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
