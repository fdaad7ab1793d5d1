import { randomBytes } from 'node:crypto'
import type { RevisionContentInput } from '../../shared/types/procedure'

/** A complete, valid revision body over the demo vocabulary (invented test data). */
export function makeContent(overrides: Partial<RevisionContentInput> = {}): RevisionContentInput {
  return {
    title: `Test procedure ${randomBytes(3).toString('hex')}`,
    deviceType: 'rotary-led-dimmer-trailing-edge',
    appliesTo: ['Test board rev A'],
    summary: 'Why these causes: a test summary.',
    symptoms: ['does-not-dim'],
    hazards: ['mains'],
    causes: [
      { key: 'shorted-fet', name: 'Shorted switching MOSFET', detail: 'The usual suspect.', prior: 0.6 },
      { key: 'open-pot', name: 'Open control potentiometer', detail: '', prior: 0.3 },
    ],
    steps: [
      { key: 'fet-diode', title: 'Diode-test the MOSFET body diode', instruction: 'Red on source, black on drain.', measurement: { quantity: 'diode_drop', unit: 'V', min: 0.4, max: 0.7 }, failPointsTo: ['shorted-fet'] },
      { key: 'pot', title: 'Measure the potentiometer track', instruction: 'Across the outer pins.', measurement: { quantity: 'resistance', unit: 'kΩ', nominal: 470, tolerancePct: 20 }, failPointsTo: ['open-pot'] },
    ],
    parts: [{ name: '600 V N-channel MOSFET, TO-220', substitutes: [] }],
    fix: 'Replace the part.',
    verification: 'Dim across the range on a test lamp.',
    ...overrides,
  }
}
