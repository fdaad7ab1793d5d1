import { captureToCsv, synthesiseCapture, type SynthOptions } from '../../shared/utils/waveform/synth'
import { Procedure, SignatureReference, type User } from '../../server/db'
import { storeCapture } from '../../server/services/captures/store'
import type { ObjectStore } from '../../server/services/storage'

/** Synthetic demo captures (drawn by the synthesiser, not downloaded) and the references they illustrate. */
const DEMO_CAPTURES: Array<{ label: string, synth: SynthOptions, refs: Array<{ procedure: string, kind: 'good' | 'fault', symptom?: string, note: string }> }> = [
  {
    label: 'Healthy VR-240, knob near full (trailing edge, 150°)',
    synth: { cut: 'trailing_edge', conductionAngleDeg: 150, load: { resistanceOhm: 529 }, noiseVrms: 1.5, seed: 1 },
    refs: [{ procedure: 'vr240-stuck-at-full', kind: 'good', note: 'A good unit at the top of its range: still cut, never a full sine.' }],
  },
  {
    label: 'Healthy VR-240, knob at half (trailing edge, 100°)',
    synth: { cut: 'trailing_edge', conductionAngleDeg: 100, load: { resistanceOhm: 529 }, noiseVrms: 1.5, seed: 2 },
    refs: [
      { procedure: 'vr240-stuck-at-full', kind: 'good', note: 'Both half-cycles cut at the same angle.' },
      { procedure: 'vr240-half-cycle-flicker', kind: 'good', note: 'Symmetric half-cycles: what a repaired unit should show.' },
    ],
  },
  {
    label: 'Healthy VR-240, knob low (trailing edge, 55°)',
    synth: { cut: 'trailing_edge', conductionAngleDeg: 55, load: { resistanceOhm: 529 }, noiseVrms: 1.5, seed: 3 },
    refs: [{ procedure: 'vr240-stuck-at-full', kind: 'good', note: 'Bottom of the range.' }],
  },
  {
    label: 'VR-240 with one half-cycle uncontrolled',
    synth: { cut: 'half_uncontrolled', edge: 'trailing_edge', conductionAngleDeg: 90, faultPolarity: 'positive', load: { resistanceOhm: 529 }, noiseVrms: 1.5, seed: 4 },
    refs: [{ procedure: 'vr240-half-cycle-flicker', kind: 'fault', symptom: 'flickers-one-half-cycle', note: 'Positive half runs full sine while the negative half follows the knob: a shorted bridge diode or switch on one side.' }],
  },
  {
    label: 'PD-400 leading edge on an LED (capacitive) load',
    synth: { cut: 'leading_edge', firingAngleDeg: 110, noiseVrms: 4, seed: 5 },
    refs: [{ procedure: 'pd400-buzzes-low', kind: 'fault', note: 'Leading-edge switch-on into a capacitive LED driver: steep edge, buzz at low settings.' }],
  },
  {
    label: 'Dead PD-400: nothing at the load',
    synth: { cut: 'dead', noiseVrms: 0.4, seed: 6 },
    refs: [{ procedure: 'pd400-dead-after-lamp-failure', kind: 'fault', note: 'No voltage at the load terminal at any setting.' }],
  },
]

export async function seedCaptures(uploader: User, store: ObjectStore): Promise<number> {
  if (await SignatureReference.count()) return 0
  let n = 0
  for (const demo of DEMO_CAPTURES) {
    const procs = await Procedure.findAll({ where: { slug: demo.refs.map(r => r.procedure) } })
    if (procs.length !== new Set(demo.refs.map(r => r.procedure)).size) continue
    const csv = captureToCsv(synthesiseCapture({ frequencyHz: 50, sampleRateHz: 20_000, cycles: 12, vrms: 230, ...demo.synth }), { delimiter: ',', timeUnit: 'ms', withUnitRow: true })
    const capture = await storeCapture({ data: Buffer.from(csv) }, { label: demo.label }, uploader, store)
    for (const r of demo.refs) {
      await SignatureReference.create({ captureId: capture.id, procedureId: procs.find(p => p.slug === r.procedure)!.id, stepKey: null, symptom: r.symptom ?? null, kind: r.kind, note: r.note, createdById: uploader.id })
    }
    n++
  }
  return n
}
