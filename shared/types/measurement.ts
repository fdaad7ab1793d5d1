import { z } from 'zod'

/** What a test step measures. The names are the trade's own. */
export const QUANTITIES = [
  'dc_voltage',
  'ac_voltage',
  'resistance',
  'diode_drop',
  'continuity',
  'capacitance',
  'current',
  'frequency',
  'temperature',
] as const
export type Quantity = (typeof QUANTITIES)[number]

/** SI base unit each quantity is read in (continuity is judged as a resistance). */
export const BASE_UNIT: Record<Quantity, BaseUnit> = {
  dc_voltage: 'V',
  ac_voltage: 'V',
  resistance: 'Ω',
  diode_drop: 'V',
  continuity: 'Ω',
  capacitance: 'F',
  current: 'A',
  frequency: 'Hz',
  temperature: '°C',
}
export const BASE_UNITS = ['V', 'A', 'Ω', 'F', 'Hz', '°C'] as const
export type BaseUnit = (typeof BASE_UNITS)[number]

/** SI prefixes a technician may type, with their power of ten. Both micro signs are accepted. */
export const SI_PREFIXES: Record<string, number> = {
  'p': -12,
  'n': -9,
  'µ': -6,
  'μ': -6,
  'u': -6,
  'm': -3,
  '': 0,
  'k': 3,
  'M': 6,
  'G': 9,
}

/**
 * Splits a spec unit such as `kΩ`, `mV`, `µF` or `°C` into prefix exponent and base unit.
 * Returns null when the text is not a prefixed unit Benchlore knows.
 */
export function splitUnit(unit: string): { exponent: number, base: BaseUnit } | null {
  const u = unit.trim().replace(/ohms?$/i, 'Ω').replace(/^deg ?C$/i, '°C')
  for (const base of BASE_UNITS) {
    if (u.endsWith(base)) {
      const prefix = u.slice(0, u.length - base.length)
      if (base === '°C') return prefix === '' ? { exponent: 0, base } : null
      const exponent = SI_PREFIXES[prefix]
      if (exponent !== undefined) return { exponent, base }
    }
  }
  return null
}

export function unitFitsQuantity(unit: string, quantity: Quantity): boolean {
  const split = splitUnit(unit)
  return split !== null && split.base === BASE_UNIT[quantity]
}

const finite = z.number().finite()

/**
 * What a good part reads on a step: either a window (`min` and/or `max`) or a nominal value with
 * a tolerance in percent, both in the spec's own `unit` (e.g. `kΩ`). `openExpected` says that an
 * open circuit is the good answer (a blown thermal fuse reads open; a healthy one does not).
 */
export const MeasurementSpec = z
  .object({
    quantity: z.enum(QUANTITIES),
    unit: z.string().trim().min(1, 'unit is required').max(8),
    min: finite.optional(),
    max: finite.optional(),
    nominal: finite.optional(),
    tolerancePct: z.number().finite().gt(0).max(100).optional(),
    openExpected: z.boolean().optional(),
  })
  .superRefine((spec, ctx) => {
    if (!unitFitsQuantity(spec.unit, spec.quantity)) {
      ctx.addIssue({
        code: 'custom',
        path: ['unit'],
        message: `unit "${spec.unit}" does not fit ${spec.quantity.replace('_', ' ')} (expected ${BASE_UNIT[spec.quantity]}, optionally with an SI prefix)`,
      })
    }
    const hasWindow = spec.min !== undefined || spec.max !== undefined
    const hasNominal = spec.nominal !== undefined || spec.tolerancePct !== undefined
    if (hasWindow && hasNominal) {
      ctx.addIssue({ code: 'custom', path: ['nominal'], message: 'give either min/max or nominal ± tolerance, not both' })
    }
    if (!hasWindow && !hasNominal && !spec.openExpected) {
      ctx.addIssue({ code: 'custom', path: ['min'], message: 'give an expected range (min/max), a nominal value with tolerance, or mark open as expected' })
    }
    if (spec.nominal !== undefined && spec.tolerancePct === undefined) {
      ctx.addIssue({ code: 'custom', path: ['tolerancePct'], message: 'a nominal value needs a tolerance in percent' })
    }
    if (spec.tolerancePct !== undefined && spec.nominal === undefined) {
      ctx.addIssue({ code: 'custom', path: ['nominal'], message: 'a tolerance needs a nominal value' })
    }
    if (spec.min !== undefined && spec.max !== undefined && spec.min > spec.max) {
      ctx.addIssue({ code: 'custom', path: ['max'], message: `max (${spec.max}) must not be below min (${spec.min})` })
    }
  })
export type MeasurementSpec = z.infer<typeof MeasurementSpec>

/**
 * POST /api/readings/evaluate: a typed reading judged against a step's measurement. A reading
 * that fails only through a likely slip (`580MV` on a 0.4–0.9 V diode test) is not judged: its
 * `verdict` and `pass` are null and `question` asks what was meant (`did you mean 580 mV?`),
 * with `suggestion` the reading as it would fit (`580 mV`). Otherwise both are null.
 */
export interface ReadingEvaluationDto {
  parsed: { value: number | null, unit: BaseUnit | null, display: string, open: boolean }
  verdict: 'in_range' | 'low' | 'high' | 'open' | null
  pass: boolean | null
  expected: string
  raises: string[]
  question: string | null
  suggestion: string | null
}
