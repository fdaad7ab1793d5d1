import type { Quantity } from '#shared/types/measurement'

/** What the meter is set to for each quantity, in the bench's words. */
export const QUANTITY_LABELS: Record<Quantity, string> = {
  dc_voltage: 'DC voltage',
  ac_voltage: 'AC voltage',
  resistance: 'Resistance',
  diode_drop: 'Diode test',
  continuity: 'Continuity',
  capacitance: 'Capacitance',
  current: 'Current',
  frequency: 'Frequency',
  temperature: 'Temperature',
}

/** Keeps a number with its unit (and a limit sign with its number) on one line, as SI asks. */
export function bindUnits(text: string): string {
  return text.replace(/([\d≤≥±]) (?=[^\s–])/g, '$1\u00A0')
}
