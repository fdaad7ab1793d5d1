import type { Quantity } from './measurement'

/** What the meter is set to for each quantity, in the bench's words. No zod here: pages that only label readings stay small. */
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
