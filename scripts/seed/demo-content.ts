// Demo workshop content: "Harbour Lane Repair Co-op" and every person, model name, part number,
// price and record rate in this file are invented for the demo. The trade facts are real
// (diode-test rules of thumb, capacitor energy, CAT III, live-bench practice); the devices are not.
import type { RevisionContentInput } from '../../shared/types/procedure'

export interface DemoSymptom { slug: string, name: string, description: string, synonyms: string[] }
export interface DemoDeviceType { slug: string, name: string, description: string }
export type DemoPerson = 'sam' | 'priya' | 'tomasz' | 'ade' | 'mika'
export interface DemoComment { by: DemoPerson, body: string, stepKey?: string, resolved?: boolean }
export type DemoRevisionState = 'published' | 'superseded' | 'in_review' | 'changes_requested' | 'rejected' | 'draft'
export interface DemoRevision {
  author: DemoPerson
  state: DemoRevisionState
  /** For decided revisions; never the author (four-eyes). */
  reviewer?: DemoPerson
  changeNote: string
  /** When it was submitted (a draft: when it was last saved); decisions follow a day or two later. */
  daysAgo: number
  content: RevisionContentInput
  comments?: DemoComment[]
}
export interface DemoProcedure { slug: string, retired?: boolean, createdBy: DemoPerson, revisions: DemoRevision[] /* oldest first */ }

export interface DemoRecordProfile {
  /** Relative share of the workshop's jobs that follow this procedure. */
  weight: number
  /** Share of confirmed-cause records per cause key; sums to 1. */
  causes: Record<string, number>
  /** Share of all records closed as no fault found. */
  noFaultFound: number
  minutes: [number, number]
  partsCostEur: [number, number]
  replacementCostEur: number
  comebackRate: number
  notEconomicalRate: number
}

export const DEMO_PEOPLE: Record<DemoPerson, { name: string, email: string, role: 'admin' | 'editor' | 'author' | 'technician' }> = {
  sam: { name: 'Sam Carter', email: 'admin@harbourlane.example', role: 'admin' },
  priya: { name: 'Priya Raman', email: 'editor@harbourlane.example', role: 'editor' },
  tomasz: { name: 'Tomasz Wójcik', email: 'author@harbourlane.example', role: 'author' },
  ade: { name: 'Ade Okafor', email: 'tech@harbourlane.example', role: 'technician' },
  mika: { name: 'Mika Lindqvist', email: 'mika@harbourlane.example', role: 'technician' },
}

// ---------------------------------------------------------------------------------------------
// Vocabularies
// ---------------------------------------------------------------------------------------------

export const DEMO_DEVICE_TYPES: DemoDeviceType[] = [
  {
    slug: 'rotary-led-dimmer-trailing-edge',
    name: '2-wire rotary LED dimmer (trailing edge)',
    description: 'Wall-box rotary dimmers with electronic push on/off and no neutral, switching one MOSFET inside a diode bridge. Vantrel VR-240 (10–100 W LED, 40–400 W incandescent or halogen) and VR-240S. The whole board sits at mains potential.',
  },
  {
    slug: 'push-dimmer-leading-edge',
    name: 'Leading-edge push dimmer',
    description: 'TRIAC dimmers with a latching push switch, an internal fuse and an RF suppression choke, for incandescent, halogen and wire-wound transformer loads. Ostrin PD-400 (60–400 W) and the discontinued PD-250.',
  },
  {
    slug: 'cc-led-driver-350ma',
    name: 'Constant-current LED driver 350 mA',
    description: 'Isolated (SELV output) single-stage flyback drivers for downlights and panels, trailing-edge dimmable. Celdra CC350-24 and CC350-24D: 350 mA, 24–42 V, 15 W.',
  },
  {
    slug: 'cv-led-supply-24v',
    name: 'Constant-voltage LED supply 24 V 60 W',
    description: 'Class I metal-case supplies for LED strip in corridors and stairwells, with an output trim. Celdra CV24-60: 24 V 2.5 A, 100 µF 400 V bulk capacitor.',
  },
  {
    slug: 'pir-occupancy-switch',
    name: 'PIR occupancy switch',
    description: 'Ceiling passive-infrared switches with neutral, relay output, time-out and lux settings. Capacitive-dropper supply: the low-voltage side is not isolated from mains. Kemlow PX-10 and PX-10L.',
  },
  {
    slug: 'usb-c-charger-30w',
    name: 'USB-C wall charger 30 W',
    description: 'Plug-in USB Power Delivery chargers (5 V 3 A, 9 V 3 A, 15 V 2 A, 20 V 1.5 A) with a quasi-resonant flyback and a synchronous rectifier. Brixa QC30 and QC30-EU; sealed cases.',
  },
]

export const DEMO_SYMPTOMS: DemoSymptom[] = [
  {
    slug: 'does-not-dim',
    name: 'Does not dim',
    description: 'The lamp comes on but stays at or near full brightness over the whole range of the control.',
    synonyms: ['won\'t dim', 'stuck at full brightness', 'no dimming', 'full on only', 'stuck on full'],
  },
  {
    slug: 'flickers-one-half-cycle',
    name: 'Flickers on one half-cycle',
    description: 'A coarse 50 Hz flicker: one half of the mains cycle is uncontrolled or missing, so the lamp beats instead of dimming smoothly.',
    synonyms: ['half-cycle flicker', '50 Hz flicker', 'flicker half', 'one half missing', 'half-wave flicker'],
  },
  {
    slug: 'dead-no-output',
    name: 'Dead, no output',
    description: 'Nothing at the output: no light, no click, no voltage.',
    synonyms: ['nothing', 'no light', 'dead no output', 'no power', 'dead', 'not working'],
  },
  {
    slug: 'buzzes-when-dimmed',
    name: 'Buzzes when dimmed low',
    description: 'An audible hum or buzz from the dimmer or the lamp, worst at low and middle settings.',
    synonyms: ['hum', 'buzz', 'singing', 'whine', 'humming dimmer'],
  },
  {
    slug: 'lamp-flickers-low',
    name: 'Lamp flickers at low setting',
    description: 'Steady at full brightness, but shimmers, flickers or drops out towards the bottom of the range.',
    synonyms: ['low-end flicker', 'shimmer at low', 'flickers when dimmed', 'strobing at minimum', 'drops out at low'],
  },
  {
    slug: 'lamp-glows-when-off',
    name: 'LED lamp glows when off',
    description: 'With the control off, LED lamps glow faintly or flash every few seconds.',
    synonyms: ['ghosting', 'glow when off', 'dim glow', 'afterglow', 'flashes when off'],
  },
  {
    slug: 'trips-breaker-rcd',
    name: 'Trips the breaker / RCD',
    description: 'Switching on or plugging in trips the circuit breaker or the RCD, or blows the plug fuse.',
    synonyms: ['trips RCD', 'blows the MCB', 'trips out', 'earth leakage trip', 'trips the electrics', 'blows fuse'],
  },
  {
    slug: 'output-voltage-low',
    name: 'Output voltage low',
    description: 'The output is below its rating, at no load or once loaded; LED strip is dim at the far end or the load drops out.',
    synonyms: ['low output', 'undervoltage', 'sagging output', 'voltage drops under load', 'dim strip'],
  },
  {
    slug: 'charger-hiccup',
    name: 'Charger restarts in a loop (hiccup)',
    description: 'The output comes up and collapses every second or two; the phone starts and stops charging.',
    synonyms: ['hiccup', 'cycling', 'ticking', 'restarts', 'charging on and off', 'blinking LED'],
  },
  {
    slug: 'charges-slowly',
    name: 'Charges slowly / stays at 5 V',
    description: 'Charges, but never negotiates a higher voltage: the device reports slow charging.',
    synonyms: ['no fast charge', '5 V only', 'no PD', 'slow charge', 'slow charging'],
  },
  {
    slug: 'runs-hot',
    name: 'Runs hot',
    description: 'The unit or its faceplate gets hotter than usual at normal load, or shuts down after a while.',
    synonyms: ['overheating', 'too hot to touch', 'hot faceplate', 'thermal shutdown', 'gets hot'],
  },
  {
    slug: 'stays-on',
    name: 'Stays on / does not switch off',
    description: 'The load stays on after the time-out with nobody in the room.',
    synonyms: ['won\'t switch off', 'stuck on', 'always on', 'no time-out', 'lights stay on'],
  },
  {
    slug: 'switches-on-by-itself',
    name: 'Switches on by itself',
    description: 'The load comes on with nobody in range: draughts, heaters or sunlight trigger it.',
    synonyms: ['false trigger', 'nuisance switching', 'ghost trigger', 'comes on at night', 'random switching'],
  },
  {
    slug: 'no-motion-detect',
    name: 'Does not detect motion',
    description: 'Walking in front of the sensor does not switch the load on, or only from very close.',
    synonyms: ['no detection', 'PIR not triggering', 'ignores movement', 'won\'t switch on', 'short range'],
  },
  {
    slug: 'burning-smell',
    name: 'Smell of burning / scorch marks',
    description: 'A hot-plastic or burning smell, or brown and black marks on the case, terminals or board.',
    synonyms: ['burnt smell', 'scorched', 'charring', 'smoke', 'discoloured PCB', 'melted terminal'],
  },
]

// ---------------------------------------------------------------------------------------------
// Wording the trade repeats on every bench sheet
// ---------------------------------------------------------------------------------------------

const LIVE_BENCH = '> **Live test — qualified personnel only; follow local electrical codes.** Feed the unit from the bench isolating transformer through the bench RCD, on the earth-free mat, one hand clear of the bench. The scope ground is earthed: measure with the rated differential probe and never float the scope. An RCD does not trip on a line-to-neutral contact.'

const NOT_ISOLATED = '>\n> This board has no isolation: every part on it, including the low-voltage rail, is at mains potential while it is plugged in.'

const WALL_CAT_III = '> **A wall dimmer is a CAT III location.** A reading taken before the dimmer leaves the wall needs a meter and leads rated CAT III 300 V or better. Removing it is fixed-wiring work: isolate the circuit, lock off, prove dead with a voltage indicator that you prove on a known source before and after, and leave it to a licensed electrician where local rules require one.'

/** The discharge step most mains units need before a probe touches the board. */
function dischargeInstruction(capacitor: string, energyNote: string): string {
  return [
    `Unplug the unit and discharge first. Wait one minute, then hold a 1 kΩ 5 W resistor in insulated clip leads across ${capacitor} for at least 5 s. ${energyNote} Do not trust the bleeder resistor.`,
    '',
    'Meter on DC volts, probes on the capacitor terminals. Enter the reading. Above 5 V: discharge again and measure again before you touch the board.',
  ].join('\n')
}

// ---------------------------------------------------------------------------------------------
// Earlier revisions are derived from later ones, so what changed between them is explicit
// ---------------------------------------------------------------------------------------------

type Content = RevisionContentInput
type Step = Content['steps'][number]
type Cause = Content['causes'][number]

function revise(from: Content, edit: (draft: Content) => void): Content {
  const draft = structuredClone(from)
  edit(draft)
  return draft
}

function stepOf(content: Content, key: string): Step {
  const found = content.steps.find(s => s.key === key)
  if (!found) throw new Error(`demo content: no step "${key}" in "${content.title}"`)
  return found
}

function causeOf(content: Content, key: string): Cause {
  const found = content.causes.find(c => c.key === key)
  if (!found) throw new Error(`demo content: no cause "${key}" in "${content.title}"`)
  return found
}

function dropSteps(content: Content, ...keys: string[]): void {
  content.steps = content.steps.filter(s => !keys.includes(s.key))
}

function dropCauses(content: Content, ...keys: string[]): void {
  content.causes = content.causes.filter(c => !keys.includes(c.key))
  for (const step of content.steps) {
    if (step.failPointsTo) step.failPointsTo = step.failPointsTo.filter(k => !keys.includes(k))
    for (const entry of Object.values(step.verdicts ?? {})) {
      if (entry?.causes) entry.causes = entry.causes.filter(k => !keys.includes(k))
    }
  }
}

function setPriors(content: Content, priors: Record<string, number>): void {
  for (const [key, prior] of Object.entries(priors)) causeOf(content, key).prior = prior
}

// ---------------------------------------------------------------------------------------------
// Vantrel VR-240 (2-wire trailing-edge rotary)
// ---------------------------------------------------------------------------------------------

const VR240_APPLIES = ['Vantrel VR-240 rotary, board rev B and C', 'Vantrel VR-240S (grid-switch version)']

const vr240BridgeLowest: Step = {
  key: 'bridge',
  title: 'Diode-test BR1, four forward pairs (lowest reading)',
  instruction: [
    'Meter on diode test, unit unplugged. BR1 is the flat four-pin bridge beside Q1; its pins are marked **~ ~ + −** on the body.',
    '',
    'Take the four forward readings:',
    '',
    '1. red on **−**, black on the first **~**',
    '2. red on **−**, black on the second **~**',
    '3. red on the first **~**, black on **+**',
    '4. red on the second **~**, black on **+**',
    '',
    'A good silicon diode reads **0.40–0.90 V** in each position. Enter the **lowest** of the four. Under 0.050 V in one pair, and again with the probes swapped, is a shorted diode.',
    '',
    'Skip the − → + pair: in circuit it reads the body diode of Q1 (about 0.5 V), not the two bridge drops of 0.8–1.5 V you would see on a loose bridge.',
  ].join('\n'),
  measurement: { quantity: 'diode_drop', unit: 'V', min: 0.4, max: 0.9 },
  verdicts: { low: { causes: ['bridge_short'] } },
  minutes: 8,
}

const vr240DoesNotDimV3: Content = {
  title: 'VR-240 stuck at full brightness',
  deviceType: 'rotary-led-dimmer-trailing-edge',
  appliesTo: VR240_APPLIES,
  symptoms: ['does-not-dim'],
  hazards: ['mains'],
  summary: [
    'The VR-240 has no neutral. Q1 sits across the DC side of the bridge BR1 and switches both half-cycles, so a drain–source short in Q1 passes the full sine wave and the knob does nothing. That is the failure in about two jobs out of three: Q1 is killed by inrush when the circuit carries more than the LED rating (10 lamps / 100 W LED), or by the surge when a lamp fails.',
    '',
    'A shorted BR1 diode bypasses Q1 on one half-cycle only; the lamp still dims a little and beats at 50 Hz — if that is what you see, use the half-cycle flicker procedure instead. A worn RV1 track gives full brightness over most of the rotation with a dead spot. A dead controller U1 normally leaves Q1 off (lamp off), so a gate held high is the rare one, checked last.',
  ].join('\n'),
  causes: [
    { key: 'q1_short', name: 'MOSFET Q1 shorted drain–source', prior: 0.6, detail: 'Inrush from too many LED lamps, or a lamp failing short. Often with a discoloured pad under the tab.' },
    { key: 'bridge_short', name: 'Bridge rectifier BR1 diode shorted', prior: 0.15, detail: 'Usually taken out by the same surge as Q1. Leaves one half-cycle uncontrolled.' },
    { key: 'pot_worn', name: 'Potentiometer RV1 track worn or open', prior: 0.15, detail: 'Carbon track worn through near the minimum end; typical on units in stairwells that are turned all day.' },
    { key: 'u1_gate_stuck', name: 'Controller U1 holds the gate high', prior: 0.1, detail: 'Rare. Only after Q1, BR1 and RV1 have tested good.' },
  ],
  steps: [
    {
      key: 'confirm',
      title: 'Confirm the symptom on the bench load',
      instruction: [
        LIVE_BENCH,
        '',
        'Connect the dimmer in series with the 60 W halogen test lamp (a trailing-edge dimmer runs a resistive lamp as well as LED lamps). Push on, turn the knob fully anticlockwise to minimum.',
        '',
        'Meter on AC volts, **true RMS only** — an average-responding meter misreads a phase-cut waveform. Probes across the lamp terminals. A working VR-240 at minimum gives **120 V or less**; a stuck one gives nearly the full bench voltage (about 225–235 V).',
      ].join('\n'),
      measurement: { quantity: 'ac_voltage', unit: 'V', max: 120 },
      verdicts: { high: { causes: ['q1_short', 'bridge_short', 'pot_worn', 'u1_gate_stuck'] } },
      minutes: 5,
    },
    {
      key: 'q1_ds',
      title: 'Diode-test Q1 source to drain',
      instruction: [
        'Unplug the dimmer. Q1 is the TO-220 bolted to the aluminium plate; pins left to right with the print facing you: **G D S**, tab = D.',
        '',
        '1. Bridge G and S with a clip lead for a second to drain the gate charge.',
        '2. Meter on diode test. Red on **S** (pin 3, joined to BR1 −), black on **D** (the tab).',
        '3. Enter the reading. The body diode of a good MOSFET reads **0.40–0.70 V**.',
        '4. Swap the probes (red on D, black on S). A good part reads **OL**; the display may count up for a few seconds while the supply capacitor C3 charges — that is normal.',
        '',
        'Near 0 V both ways: Q1 is shorted. Replace it; never refit a MOSFET that read shorted once and then "recovered".',
      ].join('\n'),
      measurement: { quantity: 'diode_drop', unit: 'V', min: 0.4, max: 0.7 },
      verdicts: { low: { causes: ['q1_short'] } },
      minutes: 4,
    },
    {
      ...vr240BridgeLowest,
      instruction: `${vr240BridgeLowest.instruction}\n\nDo this step even when Q1 read shorted: the surge that kills Q1 often takes a bridge diode with it.`,
    },
    {
      key: 'pot',
      title: 'Measure RV1 end to end, then sweep the wiper',
      instruction: [
        'Unplug the dimmer. RV1 is the 220 kΩ linear potentiometer under the knob; lift the wire link from its wiper tag so the control circuit does not load the reading.',
        '',
        'Meter on resistance, probes on the two **outer** tags. Enter the reading: a good track reads **220 kΩ ±20 %**.',
        '',
        'Then move one probe to the wiper and turn the shaft slowly end to end. The reading must rise smoothly with no jump to OL. A jump, or a flat spot near one end, is a worn track even when the end-to-end value is right.',
      ].join('\n'),
      measurement: { quantity: 'resistance', unit: 'kΩ', nominal: 220, tolerancePct: 20 },
      verdicts: { high: { causes: ['pot_worn'] }, open: { causes: ['pot_worn'] } },
      minutes: 6,
    },
    {
      key: 'gate_drive',
      title: 'Look at the gate drive at minimum',
      instruction: [
        LIVE_BENCH,
        '',
        'Only when Q1, BR1 and RV1 are good (Q1 refitted or replaced). Differential probe across Q1 gate (+) and source (−): the source is the bridge − rail, which is at mains potential.',
        '',
        'At minimum the gate should rise to about 10–12 V at each zero crossing and fall back to 0 V a short way into the half-cycle (trailing edge: the lamp is cut off part-way through). A gate that stays high all the time while the knob moves means U1 is not switching: record the capture and attach it.',
      ].join('\n'),
      verdicts: { fail: { causes: ['u1_gate_stuck'] } },
      minutes: 12,
    },
  ],
  parts: [
    { name: 'N-channel MOSFET 600 V 7 A, insulated TO-220 (Q1)', partNumber: 'HLS-2311', substitutes: ['600–650 V, ≥ 7 A, RDS(on) ≤ 1.2 Ω N-channel MOSFET, full-pack TO-220, gate threshold 2–4 V'] },
    { name: '600 V 4 A bridge rectifier, KBP-style (BR1)', partNumber: 'HLS-1043', substitutes: ['600 V 2 A flat bridge, same 4-pin in-line footprint', 'Four 1N4007 on the bridge pads (temporary only; note it on the job sheet)'] },
    { name: '220 kΩ linear potentiometer with push switch, 6 mm D shaft (RV1)', partNumber: 'HLS-3120', substitutes: ['220 kΩ linear, 6 mm D shaft, momentary push, from a donor VR-240'] },
    { name: 'Silicone insulating pad, TO-220', partNumber: 'HLS-0901', substitutes: [] },
  ],
  fix: [
    'Replace Q1 with a new insulating pad; tighten the screw until the pad is just compressed and check tab-to-plate isolation on the resistance range (OL). Replace BR1 if it failed its check. Replace RV1 if the sweep jumped.',
    '',
    'A dead Q1 is a symptom of the circuit as well as the dimmer: ask the housing association how many lamps are on it. More than 10 LED lamps or over 100 W of LED will kill the new part too — write it on the job sheet and return the unit with a note.',
  ].join('\n'),
  verification: [
    `${LIVE_BENCH}`,
    '',
    'On the bench load: push on, minimum reads ≤ 120 V true RMS across the 60 W halogen, the range is smooth from minimum to full with no flicker, push off turns the lamp off. Run 30 min at full: the Q1 tab stays under 75 °C. Repeat with the bench LED load (6 × 7 W dimmable lamps). Record the readings on the job.',
  ].join('\n'),
}

const vr240DoesNotDimV2 = revise(vr240DoesNotDimV3, (c) => {
  dropSteps(c, 'gate_drive')
  dropCauses(c, 'u1_gate_stuck')
  setPriors(c, { q1_short: 0.65, bridge_short: 0.15, pot_worn: 0.2 })
  c.causes = [causeOf(c, 'q1_short'), causeOf(c, 'pot_worn'), causeOf(c, 'bridge_short')]
  c.steps = [stepOf(c, 'confirm'), stepOf(c, 'q1_ds'), stepOf(c, 'pot'), stepOf(c, 'bridge')]
  // Revision 2 still accepted any meter and a higher minimum; revision 3 tightened both.
  stepOf(c, 'confirm').instruction = stepOf(c, 'confirm').instruction.replace('**true RMS only** — an average-responding meter misreads a phase-cut waveform', 'true RMS if you have one').replace('**120 V or less**', '**150 V or less**')
  stepOf(c, 'confirm').measurement = { quantity: 'ac_voltage', unit: 'V', max: 150 }
  c.verification = (c.verification ?? '').replace('minimum reads ≤ 120 V true RMS', 'minimum reads ≤ 150 V')
  c.summary = (c.summary ?? '').replace(' A dead controller U1 normally leaves Q1 off (lamp off), so a gate held high is the rare one, checked last.', '')
})

const vr240DoesNotDimV1 = revise(vr240DoesNotDimV2, (c) => {
  dropSteps(c, 'bridge')
  dropCauses(c, 'bridge_short')
  setPriors(c, { q1_short: 0.7, pot_worn: 0.3 })
  // The first revision took a wider body-diode window than the part's meter reading supports.
  stepOf(c, 'q1_ds').measurement = { quantity: 'diode_drop', unit: 'V', min: 0.3, max: 0.8 }
  stepOf(c, 'q1_ds').instruction = stepOf(c, 'q1_ds').instruction.replace('**0.40–0.70 V**', '**0.30–0.80 V**')
  c.summary = 'Q1 sits across the DC side of BR1 and switches both half-cycles; a drain–source short passes the full sine wave and the knob does nothing. Check Q1 first, then the potentiometer.'
  c.parts = (c.parts ?? []).filter(p => !p.name.includes('bridge rectifier'))
  c.fix = 'Replace Q1 with a new insulating pad. Replace RV1 if the sweep jumped. Ask how many lamps are on the circuit.'
})

// The half-cycle procedure
const vr240HalfCycleV2: Content = {
  title: 'VR-240 flickers on one half-cycle',
  deviceType: 'rotary-led-dimmer-trailing-edge',
  appliesTo: VR240_APPLIES,
  symptoms: ['flickers-one-half-cycle', 'does-not-dim'],
  hazards: ['mains'],
  summary: [
    'Q1 sits inside BR1, so one MOSFET switches both half-cycles through different diode pairs. One shorted diode lets one half-cycle bypass Q1: that half is passed in full, the other is still cut, and the light beats at 50 Hz instead of 100 Hz and will only dim to about half. An open diode does the opposite: that half-cycle is missing, the lamp is dim and flickers, and the dimmer, which harvests its supply on both halves, may drop out at low settings.',
    '',
    'A capture of the load voltage tells the two apart in seconds: the half-cycle RMS values differ and one half shows no cut (short) or no conduction (open). Rule out the lamps first: one LED lamp with a failed input stage makes the whole group beat.',
  ].join('\n'),
  causes: [
    { key: 'bridge_short', name: 'BR1 diode shorted (one half-cycle uncontrolled)', prior: 0.55, detail: 'Surge damage; often after a lamp failure.' },
    { key: 'bridge_open', name: 'BR1 diode open (one half-cycle missing)', prior: 0.15, detail: 'Cracked joint on a BR1 pin or a diode open inside the package.' },
    { key: 'load_lamp_fault', name: 'One lamp on the circuit has a failed input stage', prior: 0.2, detail: 'Not a dimmer fault: the lamp conducts on one half only and makes the group beat.' },
    { key: 'zero_cross_sense', name: 'Zero-cross sense resistor R5 open', prior: 0.1, detail: 'U1 loses its timing on one half-cycle. A 1 MΩ resistor under full mains stress; it drifts open with age.' },
  ],
  steps: [
    {
      key: 'swap_load',
      title: 'Rule out the lamps with the bench load',
      instruction: [
        LIVE_BENCH,
        '',
        'Run the dimmer into the bench LED load (6 × 7 W dimmable lamps from a known-good batch). Turn slowly from minimum to full.',
        '',
        'If the 50 Hz beat is gone on the bench load, the dimmer is fine and a lamp on site is at fault — mark this step failed and tell the customer which lamps to test. If it beats on the bench load too, carry on.',
      ].join('\n'),
      verdicts: { fail: { causes: ['load_lamp_fault'] } },
      minutes: 10,
    },
    {
      key: 'capture',
      title: 'Capture the load voltage',
      instruction: [
        LIVE_BENCH,
        '',
        'Differential probe across the bench load, 10 ms/div, at the mid setting. Save the CSV export (time, voltage) and attach it to this job as a capture: the half-cycle RMS values and their asymmetry are computed for you.',
        '',
        'Good: both half-cycles cut at the same point. Shorted diode: one half is a full half-sine. Open diode: one half is missing entirely.',
      ].join('\n'),
      expectedCut: ['trailing_edge'],
      verdicts: { fail: { causes: ['bridge_short', 'bridge_open', 'zero_cross_sense'] } },
      minutes: 8,
    },
    {
      ...vr240BridgeLowest,
      key: 'bridge_low',
      title: 'Diode-test BR1, four forward pairs (lowest reading)',
    },
    {
      key: 'bridge_high',
      title: 'Diode-test BR1, four forward pairs (highest reading)',
      instruction: [
        'Same four probe positions as the step before (red on − to each ~, red on each ~ to +). Enter the **highest** of the four.',
        '',
        'Good: **0.40–0.90 V**. OL in one position, and OL again with the probes swapped, is an open diode — look at that pin under the magnifier for a ring crack before condemning the part.',
      ].join('\n'),
      measurement: { quantity: 'diode_drop', unit: 'V', min: 0.4, max: 0.9 },
      verdicts: { open: { causes: ['bridge_open'] } },
      minutes: 6,
    },
    {
      key: 'r5',
      title: 'Measure the zero-cross sense resistor R5',
      instruction: [
        'Unplug the dimmer. R5 is the long 1 MΩ resistor between the L terminal and U1 pin 2 (colour bands **brown-black-green-gold**: 1 MΩ ±5 %). Lift one end — in circuit U1 and C3 pull the reading down.',
        '',
        'Meter on resistance. Good: **1.0 MΩ ±5 %**. Drifted high or OL: replace with a 1 MΩ resistor rated for at least 350 V working (a single 0.25 W resistor is not).',
      ].join('\n'),
      measurement: { quantity: 'resistance', unit: 'MΩ', nominal: 1.0, tolerancePct: 5 },
      verdicts: { high: { causes: ['zero_cross_sense'] }, open: { causes: ['zero_cross_sense'] } },
      minutes: 5,
    },
  ],
  parts: [
    { name: '600 V 4 A bridge rectifier, KBP-style (BR1)', partNumber: 'HLS-1043', substitutes: ['600 V 2 A flat bridge, same 4-pin in-line footprint'] },
    { name: '1 MΩ 0.5 W resistor, 350 V working (R5)', partNumber: 'HLS-4105', substitutes: ['Two 470 kΩ 0.25 W in series (each 250 V working), 940 kΩ total, within U1 timing'] },
  ],
  fix: [
    'Replace BR1 as a whole package, never one leg. A shorted BR1 diode means the surge also stressed Q1: run the Q1 diode test from the stuck-at-full procedure before you power up.',
    '',
    'If the lamps were the fault, return the dimmer tested good with the capture attached, and list the lamps to replace.',
  ].join('\n'),
  verification: [
    LIVE_BENCH,
    '',
    'Capture again at the mid setting: both half-cycles cut at the same point, half-cycle RMS within 2 % of each other. Smooth range on the bench LED load; no beat at minimum.',
  ].join('\n'),
}

const vr240HalfCycleV1 = revise(vr240HalfCycleV2, (c) => {
  dropSteps(c, 'bridge_high', 'r5')
  dropCauses(c, 'bridge_open', 'zero_cross_sense')
  setPriors(c, { bridge_short: 0.75, load_lamp_fault: 0.25 })
  c.summary = 'Q1 sits inside BR1 and switches both half-cycles. One shorted diode lets one half-cycle bypass Q1: that half is passed in full and the light beats at 50 Hz. Rule out the lamps first, then test the bridge.'
  c.parts = (c.parts ?? []).filter(p => !p.name.startsWith('1 MΩ'))
  c.verification = (c.verification ?? '').replace(', half-cycle RMS within 2 % of each other', '')
})

// Glows when off
const vr240GlowsWhenOff: Content = {
  title: 'LED lamps glow or flash with the VR-240 off',
  deviceType: 'rotary-led-dimmer-trailing-edge',
  appliesTo: VR240_APPLIES,
  symptoms: ['lamp-glows-when-off'],
  hazards: ['mains'],
  summary: [
    'A 2-wire dimmer has no neutral, so even when it is "off" (electronic off after a push) it draws its own supply current through the lamps, plus whatever the snubber capacitor C5 across the terminals passes. An incandescent lamp shows none of it; an LED lamp\'s driver collects it in its input capacitor and glows, or flashes every few seconds.',
    '',
    'Most of these jobs are not faults: the load is below the VR-240\'s LED minimum (two lamps or 10 W), or the lamps are not dimmable. Only then suspect the dimmer: a leaky Q1, or a C5 that an earlier repair replaced with a larger value.',
  ].join('\n'),
  causes: [
    { key: 'load_below_min', name: 'Load below the LED minimum (2 lamps / 10 W)', prior: 0.55, detail: 'Typical after a refit to lower-wattage lamps. The fix is on site, not in the dimmer.' },
    { key: 'lamp_type', name: 'Non-dimmable or incompatible LED lamps', prior: 0.15, detail: 'Some lamps draw almost nothing until their input capacitor charges, then flash.' },
    { key: 'q1_leaky', name: 'Q1 leaky drain–source', prior: 0.15, detail: 'After overstress; reads a few MΩ instead of open.' },
    { key: 'snubber_wrong', name: 'Snubber C5 larger than 10 nF', prior: 0.15, detail: 'A previous repair fitted 47 nF or 100 nF: at 230 V 50 Hz, 47 nF passes about 3.4 mA.' },
  ],
  steps: [
    {
      key: 'load_check',
      title: 'Check the installed load on the job sheet',
      instruction: 'Count the lamps and add their wattage from the job sheet or the lamps sent in with the unit. The VR-240 needs **at least 2 LED lamps or 10 W**, and the lamps must be marked dimmable. Below that, or with non-dimmable lamps, mark this step failed: the dimmer is probably fine.',
      verdicts: { fail: { causes: ['load_below_min', 'lamp_type'] } },
      minutes: 3,
    },
    {
      key: 'off_current',
      title: 'Measure the off-state current',
      instruction: [
        LIVE_BENCH,
        '',
        'Put the meter on AC mA, in series with the bench 60 W halogen lamp and the dimmer. Push the dimmer off and wait 10 s for the reading to settle.',
        '',
        'A good VR-240 draws **2.0 mA or less** when off (its own supply plus C5). More than that is a leaky Q1 or an oversized C5.',
      ].join('\n'),
      measurement: { quantity: 'current', unit: 'mA', max: 2.0 },
      verdicts: { high: { causes: ['q1_leaky', 'snubber_wrong'] } },
      minutes: 6,
    },
    {
      key: 'c5',
      title: 'Measure snubber C5 out of circuit',
      instruction: [
        'Unplug the dimmer. C5 is the yellow box capacitor across the two terminals, marked **103 X2 275V** (10 nF) when original. Lift one leg and measure on the capacitance range.',
        '',
        'Good: **10 nF ±10 %**. A reading of 47 nF or 100 nF (marked 473 or 104) is a wrong part from an earlier repair.',
      ].join('\n'),
      measurement: { quantity: 'capacitance', unit: 'nF', nominal: 10, tolerancePct: 10 },
      verdicts: { high: { causes: ['snubber_wrong'] } },
      minutes: 5,
    },
    {
      key: 'q1_leak',
      title: 'Check Q1 for drain–source leakage',
      instruction: [
        'Unplug the dimmer. Clip G to S with a lead and leave it there. Meter on the highest resistance range (20 MΩ or more). Red on **D** (tab), black on **S**: this reverse-biases the body diode.',
        '',
        'Good: **OL**, or above 10 MΩ once the reading settles. A few MΩ or less is a leaky Q1: replace it.',
      ].join('\n'),
      measurement: { quantity: 'resistance', unit: 'MΩ', min: 10, openExpected: true },
      verdicts: { low: { causes: ['q1_leaky'] } },
      minutes: 4,
    },
  ],
  parts: [
    { name: '10 nF 275 VAC X2 film capacitor, 15 mm pitch (C5)', partNumber: 'HLS-5103', substitutes: ['10 nF 305 VAC X2, 15 mm pitch'] },
    { name: 'N-channel MOSFET 600 V 7 A, insulated TO-220 (Q1)', partNumber: 'HLS-2311', substitutes: ['600–650 V, ≥ 7 A, RDS(on) ≤ 1.2 Ω N-channel MOSFET, full-pack TO-220'] },
  ],
  fix: [
    'Fit the right C5 (X2-rated only) or a new Q1. If the load is the cause, return the dimmer tested good with a note: the remedy is more load, dimmable lamps, or a load-correction device fitted at the last lamp per its maker\'s instructions — fixed-wiring work for a licensed electrician where local rules require one.',
  ].join('\n'),
  verification: [
    LIVE_BENCH,
    '',
    'Off-state current ≤ 2.0 mA; the bench LED load with 2 lamps stays dark for 5 min with the dimmer off.',
  ].join('\n'),
}

// Runs hot: submitted, not yet decided
const vr240RunsHot: Content = {
  title: 'VR-240 faceplate hot or scorched',
  deviceType: 'rotary-led-dimmer-trailing-edge',
  appliesTo: VR240_APPLIES,
  symptoms: ['runs-hot', 'burning-smell'],
  hazards: ['mains', 'heat'],
  summary: [
    'All the heat in a VR-240 comes from Q1\'s conduction loss and the two screw terminals. A warm faceplate at full load is normal; too hot to keep a hand on, or brown marks, is not. Overload is the usual reason: LED lamps draw more RMS current than their wattage suggests, and the LED rating is a quarter of the incandescent one. After that come a loose terminal (a high-resistance joint that heats at full load) and a Q1 whose on-resistance rose after an earlier overload.',
    '',
    'Scorching at the terminals means the wall box and the fixed wiring need an inspection by a licensed electrician before a dimmer goes back in.',
  ].join('\n'),
  causes: [
    { key: 'overload', name: 'Load above the LED rating (100 W / 10 lamps)', prior: 0.5, detail: 'Also: two dimmers in one box without de-rating.' },
    { key: 'terminal_loose', name: 'Loose screw terminal heating', prior: 0.3, detail: 'Under-tightened at install, or a crimped ferrule that loosened.' },
    { key: 'q1_degraded', name: 'Q1 on-resistance raised after overload', prior: 0.2, detail: 'Still switches, but dissipates more; runs hot on a legal load.' },
  ],
  steps: [
    {
      key: 'visual',
      title: 'Look at the terminals and the plate',
      instruction: `${WALL_CAT_III}\n\nOn the bench, unplugged: photograph both sides before cleaning. Brown or black plastic around a terminal, a blued screw or a melted wire end: mark this step failed. Discoloured board under Q1 only points to heat from Q1, not the terminals.`,
      verdicts: { fail: { causes: ['terminal_loose'] } },
      minutes: 5,
    },
    {
      key: 'load_current',
      title: 'Measure the customer\'s load current',
      instruction: [
        LIVE_BENCH,
        '',
        'Connect the customer\'s lamps (or the job-sheet equivalent) through the dimmer at full. Meter on AC amps, true RMS, in series with the load. 100 W of LED lamps draws about 0.45–0.70 A depending on their power factor.',
        '',
        'Good: **0.70 A or less**.',
      ].join('\n'),
      measurement: { quantity: 'current', unit: 'A', max: 0.7 },
      verdicts: { high: { causes: ['overload'] } },
      minutes: 8,
    },
    {
      key: 'terminal_r',
      title: 'Measure through each terminal',
      instruction: 'Unplug the dimmer. Clamp a 20 mm stub of 1.5 mm² wire in each terminal at normal torque. Meter on the 200 Ω range; short the probes and zero them (REL). Measure from the wire stub to the solder pad of that terminal. Good: **0.2 Ω or less**; enter the worse terminal.',
      measurement: { quantity: 'continuity', unit: 'Ω', max: 0.2 },
      verdicts: { high: { causes: ['terminal_loose'] }, open: { causes: ['terminal_loose'] } },
      minutes: 6,
    },
    {
      key: 'q1_temp',
      title: 'Run at rated load and measure the Q1 tab',
      instruction: [
        LIVE_BENCH,
        '',
        'Thermocouple taped to the Q1 tab, faceplate on, dimmer face down in the bench wall-box jig. Run the 100 W bench LED load at full for 30 min, room at 20–25 °C. Good: **75 °C or less**.',
      ].join('\n'),
      measurement: { quantity: 'temperature', unit: '°C', max: 75 },
      verdicts: { high: { causes: ['q1_degraded'] } },
      minutes: 35,
    },
  ],
  parts: [
    { name: 'N-channel MOSFET 600 V 7 A, insulated TO-220 (Q1)', partNumber: 'HLS-2311', substitutes: ['600–650 V, ≥ 7 A, RDS(on) ≤ 1.2 Ω N-channel MOSFET, full-pack TO-220'] },
    { name: 'Terminal block, 2-way, 2.5 mm², 10 mm pitch', partNumber: 'HLS-6202', substitutes: ['Terminal from a donor VR-240 (same moulding)'] },
  ],
  fix: 'Replace a heat-damaged terminal block, never just re-tighten it. Replace Q1 if its tab ran hot on a legal load. Overload: return the unit with the measured current on the job sheet and the advice to split the load or use a higher-rated dimmer.',
  verification: [
    LIVE_BENCH,
    '',
    'Q1 tab ≤ 75 °C after 30 min at 100 W LED; each terminal ≤ 0.2 Ω. Record both with photos of the repaired terminals.',
  ].join('\n'),
}

// The bench's decision flow for a VR-240 rev C that has lost control of one half-cycle: each
// verdict says where to go next or what it proves (the two-wire dimmer flow, common practice).
const vr240HalfCycleFlow: Content = {
  title: 'VR-240 rev C loses one half-cycle: decision flow',
  deviceType: 'rotary-led-dimmer-trailing-edge',
  appliesTo: ['Vantrel VR-240 rotary, board rev C (thermal fuse TF1 in the L lead)'],
  symptoms: ['flickers-one-half-cycle'],
  hazards: ['mains'],
  summary: [
    'A flow, not a checklist: start at the capture and follow the verdicts. Q1 switches both half-cycles from inside the bridge BR1, so one half-cycle passing uncontrolled is either Q1 shorted or a BR1 diode shorted; the rev C board adds a thermal fuse TF1 in the L lead, which a hot Q1 can open on its way out.',
    '',
    'A capture with both halves under control sends the job on: the fault is not in the power path this flow covers. So does a Q1 that reads open, since a board that still dims one half with an open Q1 has a second fault.',
  ].join('\n'),
  causes: [
    { key: 'switch_shorted', name: 'MOSFET Q1 shorted drain–source', prior: 0.35, detail: 'Reads near 0 V both ways on the diode test.' },
    { key: 'bridge_shorted', name: 'BR1 diode shorted', prior: 0.45, detail: 'One forward pair near 0 V both ways; the surge that takes Q1 often takes a BR1 diode too.' },
    { key: 'thermal_fuse_open', name: 'Thermal fuse TF1 open', prior: 0.2, detail: 'Non-resettable; opened by heat from Q1 or by a soldering iron held too long on its lead.' },
  ],
  steps: [
    {
      key: 'capture',
      title: 'Capture the load voltage',
      instruction: [
        LIVE_BENCH,
        '',
        'Differential probe across the bench LED load, 10 ms/div, knob at the mid setting. Attach the CSV export to this job as a capture.',
        '',
        'Pass: both half-cycles follow the knob. Fail: one half-cycle is passed in full whatever the knob does.',
      ].join('\n'),
      expectedCut: ['trailing_edge'],
      verdicts: { fail: { next: 'switch' }, pass: { conclude: 'escalate' } },
      minutes: 6,
    },
    {
      key: 'switch',
      title: 'Diode-test Q1 source to drain',
      instruction: [
        'Unplug the dimmer. Bridge Q1 gate and source with a clip lead for a second. Meter on diode test, red on **S** (joined to BR1 −), black on **D** (the tab). Enter the reading.',
        '',
        'The body diode of a good MOSFET reads **0.40–0.70 V**. Near 0 V both ways: Q1 is shorted. OL both ways: Q1 is open.',
      ].join('\n'),
      measurement: { quantity: 'diode_drop', unit: 'V', min: 0.4, max: 0.7 },
      verdicts: { in_range: { next: 'bridge' }, low: { conclude: 'switch_shorted' }, open: { conclude: 'escalate' } },
      minutes: 4,
    },
    {
      key: 'bridge',
      title: 'Diode-test each BR1 diode (lowest forward reading)',
      instruction: [
        'Unit unplugged. Red on − to each ~, then red on each ~ to +. Enter the **lowest** of the four forward readings.',
        '',
        'A good silicon diode reads **0.40–0.90 V**. Under 0.050 V in one pair, and again with the probes swapped, is a shorted diode.',
      ].join('\n'),
      measurement: { quantity: 'diode_drop', unit: 'V', min: 0.4, max: 0.9 },
      verdicts: { low: { conclude: 'bridge_shorted' }, in_range: { next: 'fuse' } },
      minutes: 8,
    },
    {
      key: 'fuse',
      title: 'Check the thermal fuse TF1',
      instruction: 'TF1 is the sleeved axial part in the L lead behind the terminal block. Meter on continuity across its two leads. Good: **under 1 Ω**. Blown: OL. When you replace it, heat-sink the lead with pliers while soldering: the new one opens from soldering heat as easily as the old one did.',
      measurement: { quantity: 'continuity', unit: 'Ω', max: 1 },
      verdicts: { open: { conclude: 'thermal_fuse_open' }, in_range: { conclude: 'escalate' } },
      minutes: 3,
    },
  ],
  parts: [
    { name: 'N-channel MOSFET 600 V 7 A, insulated TO-220 (Q1)', partNumber: 'HLS-2311', substitutes: ['600–650 V, ≥ 7 A, RDS(on) ≤ 1.2 Ω N-channel MOSFET, full-pack TO-220'] },
    { name: '600 V 4 A bridge rectifier, KBP-style (BR1)', partNumber: 'HLS-1043', substitutes: ['600 V 2 A flat bridge, same 4-pin in-line footprint'] },
    { name: 'Thermal fuse 130 °C 2 A, axial (TF1)', partNumber: 'HLS-7130', substitutes: [] },
  ],
  fix: 'Replace what the flow concluded. After a shorted Q1 or BR1, test the other as well before power-up: one surge often takes both. Replace TF1 with the same temperature rating, lead heat-sunk while soldering.',
  verification: [
    LIVE_BENCH,
    '',
    'Capture again at the mid setting: both half-cycles follow the knob. Smooth range on the bench LED load; TF1 reads under 1 Ω after 30 min at full.',
  ].join('\n'),
}

// ---------------------------------------------------------------------------------------------
// Ostrin PD-400 / PD-250 (leading-edge TRIAC push dimmers)
// ---------------------------------------------------------------------------------------------

const PD400_APPLIES = ['Ostrin PD-400 push dimmer, 60–400 W', 'Ostrin PD-400/2 (two-gang plate)']

const pd400TriacOff: Step = {
  key: 'triac',
  title: 'Check TRIAC TR1 before a new fuse goes in',
  instruction: [
    'Unplug the dimmer. TR1 is the TO-220 on the steel plate (insulated tab). Meter on the highest resistance range (20 MΩ or more). Probes on **MT1** (pin 1) and **MT2** (pin 2), then swap them.',
    '',
    'Good: **OL** both ways, or above 1 MΩ once the timing capacitor has charged. A shorted TRIAC reads under 10 Ω both ways: replace it, or the new fuse will blow on the first lamp or the dimmer will come back stuck at full.',
  ].join('\n'),
  measurement: { quantity: 'resistance', unit: 'MΩ', min: 1, openExpected: true },
  verdicts: { low: { causes: ['triac_short'] } },
  minutes: 3,
}

const pd400DeadV2: Content = {
  title: 'PD-400 dead after a lamp failed',
  deviceType: 'push-dimmer-leading-edge',
  appliesTo: PD400_APPLIES,
  symptoms: ['dead-no-output'],
  hazards: ['mains'],
  summary: [
    'When an incandescent or halogen lamp fails, its filament often arcs across and draws a short, heavy pulse. In the PD-400 that pulse blows the internal fuse F1 (F2A fast, 5×20 mm) — which is what F1 is there for — and in about one job in three it shorts TR1 as well. Fit a fuse without checking TR1 and the dimmer blows it again or comes back stuck at full.',
    '',
    'If F1 is intact, a dead PD-400 is the push switch S1 (contacts worn from years of use) or, rarely, an open suppression choke L1.',
  ].join('\n'),
  causes: [
    { key: 'fuse_open_lamp_arc', name: 'F1 blown by a lamp failure (TR1 survived)', prior: 0.45, detail: 'Clean break in the fuse wire; glass clear.' },
    { key: 'triac_short', name: 'TR1 shorted and F1 blown', prior: 0.25, detail: 'Blackened or silvered fuse glass points here.' },
    { key: 'switch_worn', name: 'Push switch S1 contacts not making', prior: 0.2, detail: 'Latches mechanically but the contacts no longer close.' },
    { key: 'choke_open', name: 'Suppression choke L1 open', prior: 0.1, detail: 'Rare; a fused turn next to a burnt, discoloured winding.' },
  ],
  steps: [
    {
      key: 'isolate',
      title: 'Get the dimmer out safely',
      instruction: [
        WALL_CAT_III,
        '',
        'On the bench: the dimmer is disconnected from the test leads and the bench supply is off before the cover comes off.',
      ].join('\n'),
      minutes: 5,
    },
    {
      key: 'fuse',
      title: 'Measure F1 out of its clips',
      instruction: 'F1 sits in clips beside TR1. Pull it out and look at the glass: clear with a clean break in the wire is a typical lamp-failure blow; blackened or silvered glass is a heavy short. Meter on continuity or the lowest resistance range, probes on the two end caps. Good: **under 1 Ω**. Blown: OL.',
      measurement: { quantity: 'continuity', unit: 'Ω', max: 1 },
      verdicts: { open: { causes: ['fuse_open_lamp_arc', 'triac_short'] } },
      minutes: 3,
    },
    pd400TriacOff,
    {
      key: 'switch',
      title: 'Check the push switch S1',
      instruction: 'Dimmer unplugged. Press the knob once so S1 latches on. Meter on continuity across the two S1 solder tags (the ones with the thick track). Good: **0.5 Ω or less**. Press again: it should go OL. A switch that reads high or intermittent while you rock the shaft is worn.',
      measurement: { quantity: 'continuity', unit: 'Ω', max: 0.5 },
      verdicts: { high: { causes: ['switch_worn'] }, open: { causes: ['switch_worn'] } },
      minutes: 4,
    },
    {
      key: 'choke',
      title: 'Check the choke L1 for continuity',
      instruction: 'Meter on continuity, probes on the two L1 solder pads. Good: **under 1 Ω**. OL means an open winding; look for the burnt turn.',
      measurement: { quantity: 'continuity', unit: 'Ω', max: 1 },
      verdicts: { open: { causes: ['choke_open'] } },
      minutes: 3,
    },
  ],
  parts: [
    { name: 'F2A fast-acting fuse, 5×20 mm, 250 V (F1)', partNumber: 'HLS-7020', substitutes: ['F2A 5×20 mm ceramic, sand-filled (higher breaking capacity; preferred)'] },
    { name: '600 V 8 A TRIAC, insulated-tab TO-220 (TR1)', partNumber: 'HLS-2408', substitutes: ['600 V 8–12 A TRIAC, insulated tab, gate trigger current ≤ 35 mA'] },
    { name: 'Push switch assembly S1 with shaft', partNumber: 'HLS-3401', substitutes: ['S1 from a donor PD-400 (same bracket)'] },
  ],
  fix: [
    'Fit a new F1 of the same rating — never a larger fuse and never a wire link. Replace TR1 with a new thermal pad if it read shorted, and check the timing parts (RV1, C2) for heat marks.',
    '',
    'Tell the customer that a fuse blowing when a halogen lamp fails is the dimmer protecting itself, not a defect; leave a spare F1 in the bag.',
  ].join('\n'),
  verification: [
    LIVE_BENCH,
    '',
    'With the 100 W halogen test lamp: push on, smooth range from minimum to full, push off. 15 min at full with the cover on; F1 still reads under 1 Ω afterwards.',
  ].join('\n'),
}

const pd400DeadV1 = revise(pd400DeadV2, (c) => {
  dropSteps(c, 'triac')
  dropCauses(c, 'triac_short')
  setPriors(c, { fuse_open_lamp_arc: 0.6, switch_worn: 0.25, choke_open: 0.15 })
  c.causes[0]!.name = 'F1 blown by a lamp failure'
  c.summary = 'When a halogen lamp fails, its filament arcs and the pulse blows F1 (F2A fast, 5×20 mm). Replace F1; if F1 is intact, check the push switch S1 and the choke L1.'
  c.parts = (c.parts ?? []).filter(p => !p.name.includes('TRIAC'))
  c.fix = 'Fit a new F1 of the same rating — never a larger fuse and never a wire link.'
})

// Buzz at low settings
const pd400BuzzV1: Content = {
  title: 'PD-400 buzzes at low and middle settings',
  deviceType: 'push-dimmer-leading-edge',
  appliesTo: PD400_APPLIES,
  symptoms: ['buzzes-when-dimmed'],
  hazards: ['mains'],
  summary: [
    'A leading-edge dimmer turns on part-way through each half-cycle, so the current jumps from zero to the instantaneous line value in a few microseconds. The suppression choke L1 slows that edge to keep radio interference down, and both the choke winding and the lamp filament feel the force: they hum at 100 Hz, loudest around the middle setting where the step is biggest. A faint hum is normal.',
    '',
    'A loud buzz from the dimmer body is L1 loose on its former. A buzz from the lamp is the filament. LED lamps on a PD-400 buzz and flicker because they want a trailing-edge dimmer — that is a pairing problem, not a fault. Uneven firing from a drifted timing capacitor C2 buzzes and flickers together and is the rare one.',
  ].join('\n'),
  causes: [
    { key: 'choke_loose', name: 'Choke L1 loose on its former or its tie', prior: 0.45, detail: 'The adhesive dries out; the winding rattles at 100 Hz.' },
    { key: 'lamp_filament', name: 'Lamp filament singing', prior: 0.25, detail: 'Halogen lamps and long filaments, worst at mid settings.' },
    { key: 'led_load_mismatch', name: 'LED lamps on a leading-edge dimmer', prior: 0.2, detail: 'Lamp driver input capacitors take a current spike at every firing edge.' },
    { key: 'triac_misfiring', name: 'Uneven firing from a drifted timing capacitor C2', prior: 0.1, detail: 'Half-cycles fire at different angles; the capture shows it.' },
  ],
  steps: [
    {
      key: 'locate',
      title: 'Find out where the noise comes from',
      instruction: [
        LIVE_BENCH,
        '',
        'Run the dimmer into the 100 W halogen test lamp at the mid setting. Listen through a 300 mm length of plastic tube held near the dimmer, then near the lamp. Do not touch the board.',
        '',
        'If the buzz is at the lamp and the dimmer is quiet, mark this step failed.',
      ].join('\n'),
      verdicts: { fail: { causes: ['lamp_filament'] } },
      minutes: 6,
    },
    {
      key: 'load_type',
      title: 'Check what the dimmer was driving',
      instruction: 'Read the job sheet. LED lamps (even ones marked dimmable) on the PD-400: mark this step failed. The advice is a trailing-edge dimmer, not a repair.',
      verdicts: { fail: { causes: ['led_load_mismatch'] } },
      minutes: 2,
    },
    {
      key: 'choke',
      title: 'Inspect L1 unplugged',
      instruction: 'Unplug the dimmer. L1 is the toroid held to the board with a tie and a blob of adhesive. Dry, cracked adhesive, a loose tie or turns that move under a plastic probe: mark this step failed. Then measure its winding on continuity: good is **under 1 Ω**.',
      measurement: { quantity: 'continuity', unit: 'Ω', max: 1 },
      verdicts: { high: { causes: ['choke_loose'] }, open: { causes: ['choke_loose'] } },
      minutes: 5,
    },
    {
      key: 'c2_timing',
      title: 'Measure timing capacitor C2 out of circuit',
      instruction: 'C2 is the 100 nF film capacitor next to the DIAC. Lift one leg and measure on the capacitance range. Good: **100 nF ±10 %**.',
      measurement: { quantity: 'capacitance', unit: 'nF', nominal: 100, tolerancePct: 10 },
      verdicts: { low: { causes: ['triac_misfiring'] }, high: { causes: ['triac_misfiring'] } },
      minutes: 5,
    },
    {
      key: 'capture',
      title: 'Capture the load voltage at the mid setting',
      instruction: [
        LIVE_BENCH,
        '',
        'Differential probe across the halogen test lamp, 10 ms/div. Attach the CSV export as a capture. Good: both half-cycles fire at the same angle (leading edge: the lamp switches on part-way into each half). A difference between the halves points to C2 or TR1.',
      ].join('\n'),
      expectedCut: ['leading_edge'],
      verdicts: { fail: { causes: ['triac_misfiring'] } },
      minutes: 8,
    },
  ],
  parts: [
    { name: '100 nF 250 V polyester film capacitor, 5 mm pitch (C2)', partNumber: 'HLS-5104', substitutes: ['100 nF 400 V polypropylene film, 5 mm pitch'] },
    { name: 'Cable tie 2.5 mm and neutral-cure silicone adhesive', partNumber: 'HLS-0920', substitutes: [] },
  ],
  fix: 'Re-seat L1: new tie, old adhesive removed, neutral-cure silicone under and around the toroid; let it cure before the cover goes on. Replace C2 if out of tolerance. For LED loads, return the unit tested good with the advice to fit a trailing-edge dimmer.',
  verification: [
    LIVE_BENCH,
    '',
    'On the 100 W halogen test lamp the dimmer is no louder than the bench reference PD-400 at any setting; the capture shows both halves firing at the same angle.',
  ].join('\n'),
}

const pd400BuzzV2 = revise(pd400BuzzV1, (c) => {
  const choke = stepOf(c, 'choke')
  const pressStep: Step = {
    key: 'choke_press',
    title: 'Press on L1 while it buzzes',
    instruction: [
      LIVE_BENCH,
      '',
      'With the dimmer buzzing at the mid setting, press on the L1 winding with the plastic trimming tool. If the buzz stops, L1 is loose.',
    ].join('\n'),
    failPointsTo: ['choke_loose'],
  }
  c.steps.splice(c.steps.indexOf(choke), 0, pressStep)
  const c2 = stepOf(c, 'c2_timing')
  c2.measurement = { quantity: 'capacitance', unit: 'nF', min: 80, max: 120 }
  c2.instruction = 'C2 is the 100 nF film capacitor next to the DIAC. Lift one leg and measure on the capacitance range. Good: **80–120 nF**.'
  c.fix = 'Re-seat L1: new tie, old adhesive removed, hot-melt glue under and around the toroid. Replace C2 if out of tolerance.'
})

// Scorch marks
const pd400Scorch: Content = {
  title: 'PD-400 scorched or smelling of burning',
  deviceType: 'push-dimmer-leading-edge',
  appliesTo: PD400_APPLIES,
  symptoms: ['burning-smell', 'runs-hot'],
  hazards: ['mains', 'heat'],
  summary: [
    'Scorching on a PD-400 starts at one of two places: a terminal, or TR1. A loose terminal screw makes a high-resistance joint that heats at full load and chars the moulding; an overloaded dimmer cooks TR1 and its plate. The two-gang PD-400/2 needs de-rating to 300 W per dimmer because the heat cannot leave the box.',
    '',
    'Heat damage at a terminal means the wall box and its cables were hot too: the fixed wiring needs inspecting by a licensed electrician before any dimmer goes back.',
  ].join('\n'),
  causes: [
    { key: 'terminal_loose', name: 'Loose terminal screw (high-resistance joint)', prior: 0.45, detail: 'Char concentrated at one terminal; the conductor end often blued.' },
    { key: 'overload', name: 'Load above rating or not de-rated in a two-gang box', prior: 0.35, detail: 'Plate and TR1 evenly discoloured; no single hot spot.' },
    { key: 'triac_degraded', name: 'TR1 running hot on a legal load', prior: 0.2, detail: 'Degraded thermal contact to the plate, or a TRIAC with a high on-state drop.' },
  ],
  steps: [
    {
      key: 'visual',
      title: 'Photograph and inspect',
      instruction: [
        WALL_CAT_III,
        '',
        'On the bench, unplugged: photograph both sides before cleaning anything. Char concentrated at one terminal: mark this step failed. Even browning of the plate around TR1 points to load or TR1 instead.',
      ].join('\n'),
      verdicts: { fail: { causes: ['terminal_loose'] } },
      minutes: 5,
    },
    {
      key: 'terminal_r',
      title: 'Measure through each terminal',
      instruction: 'Clamp a 20 mm stub of 1.5 mm² wire in each terminal at normal torque. Meter on the 200 Ω range; short the probes and zero them (REL). Measure from the stub to the solder pad behind that terminal. Good: **0.2 Ω or less**; enter the worse terminal.',
      measurement: { quantity: 'continuity', unit: 'Ω', max: 0.2 },
      verdicts: { high: { causes: ['terminal_loose'] }, open: { causes: ['terminal_loose'] } },
      minutes: 6,
    },
    {
      key: 'load_current',
      title: 'Measure the customer\'s load current',
      instruction: [
        LIVE_BENCH,
        '',
        'Customer\'s lamps (or the job-sheet equivalent) through a known-good bench dimmer at full; meter on AC amps, true RMS, in series. Good: **1.74 A or less** (400 W at 230 V). For a PD-400/2, the limit is 1.30 A (300 W) per dimmer.',
      ].join('\n'),
      measurement: { quantity: 'current', unit: 'A', max: 1.74 },
      verdicts: { high: { causes: ['overload'] } },
      minutes: 8,
    },
    {
      key: 'triac_temp',
      title: 'Measure the TR1 tab at rated load',
      instruction: [
        LIVE_BENCH,
        '',
        'Only after the terminals are repaired. Thermocouple taped to the TR1 tab, cover on, dimmer face down in the bench wall-box jig, 400 W halogen load at full for 30 min, room at 20–25 °C. Good: **80 °C or less**.',
      ].join('\n'),
      measurement: { quantity: 'temperature', unit: '°C', max: 80 },
      verdicts: { high: { causes: ['triac_degraded'] } },
      minutes: 35,
    },
  ],
  parts: [
    { name: 'Terminal block, 2-way, 2.5 mm² (PD-400)', partNumber: 'HLS-6204', substitutes: ['Terminal block from a donor PD-400'] },
    { name: '600 V 8 A TRIAC, insulated-tab TO-220 (TR1)', partNumber: 'HLS-2408', substitutes: ['600 V 8–12 A TRIAC, insulated tab, gate trigger current ≤ 35 mA'] },
    { name: 'Thermal pad, TO-220, 0.25 mm', partNumber: 'HLS-0902', substitutes: ['Thin layer of thermal compound (insulated-tab TRIAC only)'] },
  ],
  fix: 'Replace a heat-damaged terminal block; charred moulding cannot be cleaned back to good insulation. Re-mount TR1 with a new pad, or replace it if it runs hot. Overload: return with the measured current and a note to split the load.',
  verification: [
    LIVE_BENCH,
    '',
    'Terminals ≤ 0.2 Ω; TR1 ≤ 80 °C after 30 min at 400 W. Insulation from the terminals (joined) to the steel mounting plate ≥ 1 MΩ at 500 V DC (common practice for Class I equipment; the plate is earthed in service). Photos before and after on the job.',
  ].join('\n'),
}

// Retired: the co-op no longer receives PD-250s
const pd250DoesNotDim: Content = {
  title: 'PD-250 stuck at full brightness',
  deviceType: 'push-dimmer-leading-edge',
  appliesTo: ['Ostrin PD-250 push dimmer, 40–250 W (discontinued)'],
  symptoms: ['does-not-dim'],
  hazards: ['mains'],
  summary: 'The PD-250 has the same TRIAC circuit as the PD-400 without the internal fuse, so a lamp failure goes straight into TR1: a shorted TR1 is most of these jobs. The rest are a worn RV1 or a drifted minimum-set resistor R2.',
  causes: [
    { key: 'triac_short', name: 'TR1 shorted MT1–MT2', prior: 0.7, detail: 'No fuse in this model to take the lamp-failure pulse.' },
    { key: 'pot_worn', name: 'RV1 track worn or open', prior: 0.2, detail: 'Full brightness over most of the rotation.' },
    { key: 'timing_drift', name: 'Minimum-set resistor R2 drifted', prior: 0.1, detail: 'Shifts the whole range towards full.' },
  ],
  steps: [
    {
      key: 'confirm',
      title: 'Confirm on the bench lamp',
      instruction: [
        LIVE_BENCH,
        '',
        'In series with the 60 W halogen test lamp at minimum. Meter on AC volts, true RMS, across the lamp. Good: **120 V or less**.',
      ].join('\n'),
      measurement: { quantity: 'ac_voltage', unit: 'V', max: 120 },
      verdicts: { high: { causes: ['triac_short', 'pot_worn', 'timing_drift'] } },
      minutes: 5,
    },
    { ...pd400TriacOff, title: 'Check TRIAC TR1 MT1–MT2', instruction: pd400TriacOff.instruction.replace(', or the new fuse will blow on the first lamp or the dimmer will come back stuck at full', '') },
    {
      key: 'pot',
      title: 'Measure RV1 end to end',
      instruction: 'Unplug. Lift the wiper link. Meter on resistance across RV1\'s outer tags. Good: **470 kΩ ±20 %**; then sweep the wiper — the reading must change smoothly.',
      measurement: { quantity: 'resistance', unit: 'kΩ', nominal: 470, tolerancePct: 20 },
      verdicts: { high: { causes: ['pot_worn'] }, open: { causes: ['pot_worn'] } },
      minutes: 6,
    },
    {
      key: 'r2',
      title: 'Measure R2',
      instruction: 'R2 is in series with RV1, bands **yellow-violet-red-gold** (4.7 kΩ ±5 %). Lift one end and measure. Good: **4.7 kΩ ±5 %**.',
      measurement: { quantity: 'resistance', unit: 'kΩ', nominal: 4.7, tolerancePct: 5 },
      verdicts: { low: { causes: ['timing_drift'] }, high: { causes: ['timing_drift'] } },
      minutes: 4,
    },
  ],
  parts: [
    { name: '600 V 8 A TRIAC, insulated-tab TO-220 (TR1)', partNumber: 'HLS-2408', substitutes: ['600 V 8–12 A TRIAC, insulated tab'] },
    { name: '4.7 kΩ 0.5 W 5 % resistor (R2)', partNumber: 'HLS-4472', substitutes: ['4.7 kΩ 0.6 W 1 % metal film'] },
  ],
  fix: 'Replace the failed part. Advise the customer that this model has no internal fuse.',
  verification: `${LIVE_BENCH}\n\nMinimum ≤ 120 V true RMS on the 60 W halogen; smooth range; push off works.`,
}

// ---------------------------------------------------------------------------------------------
// Celdra CC350-24 (constant-current LED driver)
// ---------------------------------------------------------------------------------------------

const CC350_APPLIES = ['Celdra CC350-24 (350 mA, 24–42 V)', 'Celdra CC350-24D (trailing-edge dimmable)']

const cc350DeadV3: Content = {
  title: 'CC350 driver dead, LEDs do not light',
  deviceType: 'cc-led-driver-350ma',
  appliesTo: CC350_APPLIES,
  symptoms: ['dead-no-output'],
  hazards: ['mains', 'stored_energy'],
  summary: [
    'Most dead CC350s fail on the controller\'s supply, not in the power path. U1 starts from the start-up string R1 + R2 (2 × 1 MΩ from the bulk capacitor) and then runs from the auxiliary winding into C4, a 22 µF 50 V electrolytic a few millimetres from the hot transformer. When C4 dries out, U1 starts, browns out and stops: a faint flash at switch-on or nothing. When R1 or R2 drifts open (small resistors under 300 V), U1 never starts at all.',
    '',
    'The power path fails less often but louder: a shorted primary MOSFET Q1 opens the fusible resistor FR1, usually with a smell. A shorted output diode D5 puts the driver into protection with no output.',
  ].join('\n'),
  causes: [
    { key: 'vcc_cap_dry', name: 'U1 supply capacitor C4 dried out', prior: 0.4, detail: 'Reads low or has high ESR; sometimes bulged.' },
    { key: 'primary_short_fuse', name: 'Q1 shorted, fusible resistor FR1 open', prior: 0.3, detail: 'After a surge or a failed bulk capacitor.' },
    { key: 'startup_res_open', name: 'Start-up resistor R1 or R2 open', prior: 0.2, detail: 'Small 1206 resistors carrying up to 325 V between them.' },
    { key: 'output_diode_short', name: 'Output diode D5 shorted', prior: 0.1, detail: 'Driver hiccups into a short; no light.' },
  ],
  steps: [
    {
      key: 'discharge',
      title: 'Unplug and discharge C2',
      instruction: dischargeInstruction('the bulk capacitor C2 (4.7 µF 400 V)', 'At the 325 V mains peak it holds about 0.25 J. Discharge the output capacitor C7 the same way: with no LEDs connected it can sit at the 48 V open-load limit.'),
      measurement: { quantity: 'dc_voltage', unit: 'V', max: 5 },
      minutes: 2,
    },
    {
      key: 'fuse',
      title: 'Measure fusible resistor FR1',
      instruction: 'FR1 is the green 10 Ω 1 W part right after the input terminals. Meter on resistance across its leads. Good: **10 Ω ±5 %**. OL: it has done its job — find what shorted before replacing it.',
      measurement: { quantity: 'resistance', unit: 'Ω', nominal: 10, tolerancePct: 5 },
      verdicts: { high: { causes: ['primary_short_fuse'] }, open: { causes: ['primary_short_fuse'] } },
      minutes: 3,
    },
    {
      key: 'q1',
      title: 'Diode-test primary MOSFET Q1',
      instruction: 'Q1 is the TO-251 next to the transformer. Bridge G–S with a clip lead for a second. Meter on diode test, red on **S** (the pin to the current-sense resistor), black on **D** (tab). Good body diode: **0.40–0.70 V**; reversed, OL. Near 0 V both ways: shorted.',
      measurement: { quantity: 'diode_drop', unit: 'V', min: 0.4, max: 0.7 },
      verdicts: { low: { causes: ['primary_short_fuse'] } },
      minutes: 4,
    },
    {
      key: 'startup',
      title: 'Measure the start-up string R1 + R2',
      instruction: 'R1 and R2 are the two 1206 resistors marked **105** (1 MΩ each) between C2+ and U1 pin 1. Probes on C2+ and U1 pin 1. Good: **1.8–2.1 MΩ** (in circuit it reads a little under 2.0 MΩ). Higher or OL: measure each resistor alone to find the open one.',
      measurement: { quantity: 'resistance', unit: 'MΩ', min: 1.8, max: 2.1 },
      verdicts: { high: { causes: ['startup_res_open'] }, open: { causes: ['startup_res_open'] } },
      minutes: 4,
    },
    {
      key: 'vcc_cap',
      title: 'Measure C4 out of circuit',
      instruction: 'C4 is the 22 µF 50 V electrolytic beside U1. Desolder it (it reads unreliably in circuit) and measure on the capacitance range. Good: **22 µF ±20 %**, i.e. 17.6–26.4 µF. Replace it anyway if the top is domed or the ESR meter shows more than 2 Ω.',
      measurement: { quantity: 'capacitance', unit: 'µF', nominal: 22, tolerancePct: 20 },
      verdicts: { low: { causes: ['vcc_cap_dry'] } },
      minutes: 8,
    },
    {
      key: 'output_diode',
      title: 'Diode-test output diode D5',
      instruction: 'D5 is the glass-passivated diode on the output side of the transformer, band towards C7+. Red on anode, black on cathode (band). Good silicon junction: **0.40–0.90 V**; reversed, OL. Under 0.050 V both ways: shorted.',
      measurement: { quantity: 'diode_drop', unit: 'V', min: 0.4, max: 0.9 },
      verdicts: { low: { causes: ['output_diode_short'] } },
      minutes: 4,
    },
    {
      key: 'power_up',
      title: 'First power-up through the series lamp',
      instruction: [
        LIVE_BENCH,
        '',
        'After any repair in the primary, power up the first time through the bench series-lamp limiter (60 W incandescent in series with the line). Load: the bench LED string (12 LEDs, about 36 V). Meter on DC amps in series with the string. Good: **0.33–0.37 A** (350 mA ±5 %). A lamp that stays bright means a short is still there: switch off at once.',
      ].join('\n'),
      measurement: { quantity: 'current', unit: 'A', min: 0.33, max: 0.37 },
      minutes: 10,
    },
  ],
  parts: [
    { name: '22 µF 50 V electrolytic, 105 °C, 5×11 mm (C4)', partNumber: 'HLS-5226', substitutes: ['33 µF 50 V 105 °C low-ESR, same footprint'] },
    { name: '1 MΩ 1206 resistor, 200 V working (R1, R2)', partNumber: 'HLS-4105S', substitutes: ['1 MΩ 0.5 W through-hole, 350 V working, fitted across both pads in place of R1 + R2 in series with one 1 MΩ 1206'] },
    { name: '10 Ω 1 W fusible resistor (FR1)', partNumber: 'HLS-4100F', substitutes: ['10 Ω 1 W flameproof fusible wirewound'] },
    { name: 'N-channel MOSFET 650 V 2 A, TO-251 (Q1)', partNumber: 'HLS-2602', substitutes: ['650 V ≥ 2 A N-channel MOSFET, TO-251 or TO-252, RDS(on) ≤ 4.5 Ω'] },
    { name: 'Fast-recovery rectifier 600 V 1 A (D5)', partNumber: '1N4937', substitutes: ['Ultrafast rectifier 400–600 V 1 A, DO-41'] },
  ],
  fix: 'Replace what failed. When FR1 was open, replace Q1 and FR1 together and check the current-sense resistor beside Q1 for cracks. When C4 was dry, replace it with a 105 °C part even if the original was 85 °C.',
  verification: [
    LIVE_BENCH,
    '',
    'Output current 0.33–0.37 A into the bench LED string after 30 min; restart from cold ten times without a failed start. Insulation from input to output ≥ 2 MΩ at 500 V DC (common practice for SELV drivers).',
  ].join('\n'),
}

const cc350DeadV2 = revise(cc350DeadV3, (c) => {
  dropSteps(c, 'output_diode', 'power_up')
  dropCauses(c, 'output_diode_short')
  setPriors(c, { vcc_cap_dry: 0.45, primary_short_fuse: 0.3, startup_res_open: 0.25 })
  // Revision 2 used a ±10 % window on C4; the part itself is a ±20 % electrolytic.
  const cap = stepOf(c, 'vcc_cap')
  cap.measurement = { quantity: 'capacitance', unit: 'µF', nominal: 22, tolerancePct: 10 }
  cap.instruction = cap.instruction.replace('**22 µF ±20 %**, i.e. 17.6–26.4 µF', '**22 µF ±10 %**, i.e. 19.8–24.2 µF')
  c.summary = (c.summary ?? '').replace(' A shorted output diode D5 puts the driver into protection with no output.', '')
  c.parts = (c.parts ?? []).filter(p => p.partNumber !== '1N4937')
  c.verification = `${LIVE_BENCH}\n\nOutput current 0.33–0.37 A into the bench LED string after 30 min.`
})

const cc350DeadV1 = revise(cc350DeadV2, (c) => {
  dropSteps(c, 'discharge', 'startup')
  dropCauses(c, 'startup_res_open')
  setPriors(c, { vcc_cap_dry: 0.5, primary_short_fuse: 0.5 })
  c.causes = [causeOf(c, 'primary_short_fuse'), causeOf(c, 'vcc_cap_dry')]
  c.steps = [stepOf(c, 'fuse'), stepOf(c, 'q1'), stepOf(c, 'vcc_cap')]
  c.summary = 'A dead CC350 is either the power path (Q1 shorted, FR1 open) or the controller supply (C4 dried out). Check FR1 and Q1 first, then C4.'
  c.parts = (c.parts ?? []).filter(p => p.partNumber !== 'HLS-4105S')
})

const cc350FlickerLow: Content = {
  title: 'CC350 flickers when dimmed low',
  deviceType: 'cc-led-driver-350ma',
  appliesTo: ['Celdra CC350-24D (trailing-edge dimmable)'],
  symptoms: ['lamp-flickers-low', 'flickers-one-half-cycle'],
  hazards: ['mains', 'stored_energy'],
  summary: [
    'At low settings the CC350-24D runs at a few tens of milliamps, and any ripple on its output becomes a larger share of the light. A dried-out output capacitor C7 lets the 100 Hz ripple through: steady at full, visible shimmer at the bottom of the range. That is most of these jobs.',
    '',
    'Next come the installation: a leading-edge dimmer on site (this driver is trailing-edge only), or a dimmer whose minimum is set below the driver\'s range. An open bridge diode turns the 100 Hz ripple into a coarse 50 Hz flicker at every setting — the ripple frequency on the output tells you which.',
  ].join('\n'),
  causes: [
    { key: 'output_cap_dry', name: 'Output capacitor C7 dried out', prior: 0.4, detail: 'Sits next to the transformer; loses capacitance with heat and age.' },
    { key: 'leading_edge_dimmer', name: 'Leading-edge dimmer on site', prior: 0.2, detail: 'The CC350-24D is trailing-edge only.' },
    { key: 'dimmer_min_low', name: 'Dimmer minimum set below the driver\'s range', prior: 0.25, detail: 'Fix: raise the dimmer\'s minimum trim on site.' },
    { key: 'bridge_diode_open', name: 'One bridge diode open', prior: 0.15, detail: 'Input runs on one half-cycle; 50 Hz ripple at the output.' },
  ],
  steps: [
    {
      key: 'bench_supply',
      title: 'Check the bench supply frequency',
      instruction: [
        LIVE_BENCH,
        '',
        'Meter on Hz (AC volts range) at the bench socket the driver is fed from. Good: **49.5–50.5 Hz**. Outside that, stop and sort out the bench supply (a generator or inverter feed): a dimmer locks its timing to the mains zero crossings, and you will chase a fault that is not there.',
      ].join('\n'),
      measurement: { quantity: 'frequency', unit: 'Hz', min: 49.5, max: 50.5 },
      minutes: 2,
    },
    {
      key: 'pairing',
      title: 'Check the dimmer on site, then retest on the bench dimmer',
      instruction: 'Read the job sheet for the dimmer model and its type. Then run the driver on the bench trailing-edge dimmer (a known-good VR-240) into the bench LED string. If the flicker is gone on the bench dimmer, mark this step failed: the site dimmer or its minimum setting is the cause.',
      verdicts: { fail: { causes: ['leading_edge_dimmer', 'dimmer_min_low'] } },
      minutes: 10,
    },
    {
      key: 'ripple_freq',
      title: 'Measure the ripple frequency at the output',
      instruction: [
        LIVE_BENCH,
        '',
        'No dimmer, driver at full into the bench LED string. The output is SELV only while the driver\'s isolation is intact: treat it as live until the verification step has passed. Meter on Hz across the string. Good: **95–105 Hz** (full-wave ripple). About 50 Hz: the input is running on one half-cycle — an open bridge diode.',
      ].join('\n'),
      measurement: { quantity: 'frequency', unit: 'Hz', min: 95, max: 105 },
      verdicts: { low: { causes: ['bridge_diode_open'] } },
      minutes: 4,
    },
    {
      key: 'ripple_ac',
      title: 'Measure the AC ripple across the string',
      instruction: 'Same set-up. Meter on AC volts across the LED string. Good: **0.60 V or less**. More means C7 is no longer smoothing.',
      measurement: { quantity: 'ac_voltage', unit: 'V', max: 0.6 },
      verdicts: { high: { causes: ['output_cap_dry'] } },
      minutes: 3,
    },
    {
      key: 'discharge',
      title: 'Unplug and discharge C2 and C7',
      instruction: dischargeInstruction('the bulk capacitor C2 (4.7 µF 400 V), then the output capacitor C7 (470 µF 63 V)', 'C2 at the 325 V mains peak holds about 0.25 J; C7 at the 48 V open-load limit holds about 0.54 J.'),
      measurement: { quantity: 'dc_voltage', unit: 'V', max: 5 },
      minutes: 2,
    },
    {
      key: 'c7',
      title: 'Measure C7 out of circuit',
      instruction: 'C7 is the 470 µF 63 V electrolytic on the output side. Desolder it and measure on the capacitance range. Good: **376–564 µF** (470 µF ±20 %).',
      measurement: { quantity: 'capacitance', unit: 'µF', min: 376, max: 564 },
      verdicts: { low: { causes: ['output_cap_dry'] } },
      minutes: 8,
    },
    {
      key: 'bridge_high',
      title: 'Diode-test the input bridge (highest reading)',
      instruction: 'BR1 is the four-pin SMD bridge after FR1, marked ~ ~ + −. Meter on diode test: red on − to each ~, then red on each ~ to +. Enter the **highest** of the four. Good: **0.40–0.90 V** each. OL in one position and OL reversed: that diode is open.',
      measurement: { quantity: 'diode_drop', unit: 'V', min: 0.4, max: 0.9 },
      verdicts: { open: { causes: ['bridge_diode_open'] } },
      minutes: 6,
    },
  ],
  parts: [
    { name: '470 µF 63 V electrolytic, 105 °C low-ESR, 10×20 mm (C7)', partNumber: 'HLS-5477', substitutes: ['470 µF 63 V 105 °C, 10 000 h rated, 10×20 or 10×16 mm'] },
    { name: '1 A 600 V SMD bridge rectifier (BR1)', partNumber: 'HLS-1016', substitutes: ['0.8–1 A 600 V SMD bridge, same 4-pin footprint'] },
  ],
  fix: 'Replace C7 with a 105 °C long-life part. Replace BR1 if a diode was open. If the site dimmer is the cause, return the driver tested good with a note: trailing-edge dimmer, minimum trim raised until the lamps stay lit.',
  verification: [
    LIVE_BENCH,
    '',
    'On the bench VR-240 into the bench LED string: no visible flicker from minimum to full; ripple 95–105 Hz and ≤ 0.60 V AC at full. Insulation from input to output ≥ 2 MΩ at 500 V DC.',
  ].join('\n'),
}

// ---------------------------------------------------------------------------------------------
// Celdra CV24-60 (constant-voltage 24 V supply, Class I)
// ---------------------------------------------------------------------------------------------

const CV24_APPLIES = ['Celdra CV24-60, 24 V 2.5 A, Class I metal case']
const CV24_DISCHARGE = dischargeInstruction('the bulk capacitor C3 (100 µF 400 V)', 'Charged to the 325 V mains peak, 100 µF holds 5.29 J (½·C·V²) — enough to burn and to throw your hand into the case.')

const cv24OutputLowV1: Content = {
  title: 'CV24-60 output low or sagging under load',
  deviceType: 'cv-led-supply-24v',
  appliesTo: CV24_APPLIES,
  symptoms: ['output-voltage-low', 'runs-hot'],
  hazards: ['mains', 'stored_energy'],
  summary: [
    'Decide first whether the output is low at no load or only under load. Low at no load is the set point: the output trim VR1 (a small carbon trimmer whose wiper corrodes in damp ceiling voids) or the lower divider resistor R21 drifting high. Right at no load but sagging under load is the output capacitors C10/C11 losing their ESR battle — they sit beside the output diode and run hot — or the input bulk capacitor C3 gone low, or simply more LED strip than 2.5 A.',
    '',
    'Output capacitors are most of these jobs and they also make the unit run hot: the ripple current heats them further.',
  ].join('\n'),
  causes: [
    { key: 'output_caps_esr', name: 'Output capacitors C10/C11 high ESR', prior: 0.35, detail: 'Sag under load, more ripple, hot case near the output.' },
    { key: 'vadj_worn', name: 'Output trim VR1 wiper worn or corroded', prior: 0.2, detail: 'Low or jumpy at no load; moves when tapped.' },
    { key: 'bulk_cap_low', name: 'Bulk capacitor C3 lost capacitance', prior: 0.2, detail: 'Deep 100 Hz valleys at full load; worst at low mains.' },
    { key: 'overload', name: 'More LED strip than 2.5 A', prior: 0.15, detail: 'The supply folds back to protect itself.' },
    { key: 'divider_drift', name: 'Feedback divider R21 drifted high', prior: 0.1, detail: 'Output set low at every load.' },
  ],
  steps: [
    {
      key: 'no_load',
      title: 'Measure the output at no load',
      instruction: [
        LIVE_BENCH,
        '',
        'No load connected. Meter on DC volts across the +V and −V output terminals. Good: **23.5–24.5 V**. Low here: tap VR1 gently with a plastic tool and watch the reading; a jump means a worn wiper.',
      ].join('\n'),
      measurement: { quantity: 'dc_voltage', unit: 'V', min: 23.5, max: 24.5 },
      verdicts: { low: { causes: ['vadj_worn', 'divider_drift'] } },
      minutes: 5,
    },
    {
      key: 'full_load',
      title: 'Measure the output at 2.5 A',
      instruction: [
        LIVE_BENCH,
        '',
        'Bench electronic load in constant-current mode at 2.5 A, leads straight to the output terminals. After 5 min, meter on DC volts at the terminals. Good: **23.3–24.5 V**.',
      ].join('\n'),
      measurement: { quantity: 'dc_voltage', unit: 'V', min: 23.3, max: 24.5 },
      verdicts: { low: { causes: ['output_caps_esr', 'bulk_cap_low'] } },
      minutes: 8,
    },
    {
      key: 'customer_load',
      title: 'Measure what the customer\'s strip draws',
      instruction: 'If the strip came in with the unit: feed it from the bench 24 V supply and measure the current with the meter on DC amps in series. Otherwise take the strip\'s W/m times its length from the job sheet, divided by 24 V. Good: **2.5 A or less**.',
      measurement: { quantity: 'current', unit: 'A', max: 2.5 },
      verdicts: { high: { causes: ['overload'] } },
      minutes: 5,
    },
    {
      key: 'discharge',
      title: 'Unplug and discharge C3',
      instruction: CV24_DISCHARGE,
      measurement: { quantity: 'dc_voltage', unit: 'V', max: 5 },
      minutes: 2,
    },
    {
      key: 'esr',
      title: 'Measure the ESR of C10 and C11',
      instruction: 'C10 and C11 are the two 1000 µF 35 V electrolytics beside the output diode. They are in parallel, so in circuit the ESR meter (100 kHz) reads both together: lift one leg of C11, read C10, then read C11 on its own. Enter the worse of the two. Good: **0.10 Ω or less**.',
      measurement: { quantity: 'resistance', unit: 'Ω', max: 0.1 },
      verdicts: { high: { causes: ['output_caps_esr'] } },
      minutes: 8,
    },
    {
      key: 'bulk',
      title: 'Measure C3 out of circuit',
      instruction: 'Desolder C3 (100 µF 400 V) and measure on the capacitance range. Good: **80–120 µF** (±20 %).',
      measurement: { quantity: 'capacitance', unit: 'µF', min: 80, max: 120 },
      verdicts: { low: { causes: ['bulk_cap_low'] } },
      minutes: 8,
    },
    {
      key: 'divider',
      title: 'Measure R21 with one end lifted',
      instruction: 'R21 is the 0805 resistor marked **2201** (2.2 kΩ, 1 %) between the reference\'s REF pin and output −V. Lift one end — VR1 and the reference sit in parallel in circuit. Good: **2.2 kΩ ±1 %**.',
      measurement: { quantity: 'resistance', unit: 'kΩ', nominal: 2.2, tolerancePct: 1 },
      verdicts: { high: { causes: ['divider_drift'] }, open: { causes: ['divider_drift'] } },
      minutes: 5,
    },
  ],
  parts: [
    { name: '1000 µF 35 V electrolytic, 105 °C low-ESR, 10×20 mm (C10, C11)', partNumber: 'HLS-5108', substitutes: ['1000 µF 35 V 105 °C, ESR ≤ 0.04 Ω, 12.5×20 mm if it fits under the lid'] },
    { name: '100 µF 400 V electrolytic, 105 °C, 18×35 mm (C3)', partNumber: 'HLS-5101H', substitutes: ['100 µF 450 V 105 °C, same diameter'] },
    { name: '1 kΩ top-adjust trimmer, sealed (VR1)', partNumber: 'HLS-3102', substitutes: ['1 kΩ sealed cermet trimmer, 5 mm pitch'] },
    { name: '2.2 kΩ 1 % 0805 resistor (R21)', partNumber: 'HLS-4222', substitutes: [] },
  ],
  fix: 'Replace C10 and C11 as a pair. Replace VR1 with a sealed cermet part and set the output to 24.0 V at no load. When the strip draws more than 2.5 A, return the unit tested good with the measured current and advise splitting the run.',
  verification: [
    LIVE_BENCH,
    '',
    '24.0 V ±0.5 V at no load; ≥ 23.3 V at 2.5 A after 30 min; case ≤ 60 °C at the output end. Earth continuity from the case to the earth pin ≤ 0.1 Ω plus the cable, and insulation L+N to earth ≥ 1 MΩ at 500 V DC (common practice for Class I equipment). Record the readings.',
  ].join('\n'),
}

const cv24OutputLowDraft = revise(cv24OutputLowV1, (c) => {
  const fullLoad = stepOf(c, 'full_load')
  c.steps.splice(c.steps.indexOf(fullLoad) + 1, 0, {
    key: 'ripple',
    title: 'Measure the output ripple at 2.5 A',
    instruction: [
      LIVE_BENCH,
      '',
      'Same set-up as the full-load step. Meter on AC volts across the output terminals. Good: **0.15 V or less**.',
    ].join('\n'),
    measurement: { quantity: 'ac_voltage', unit: 'V', max: 0.15 },
    failPointsTo: ['output_caps_esr', 'bulk_cap_low'],
  })
})

const cv24TripsRcd: Content = {
  title: 'CV24-60 trips the RCD or the breaker',
  deviceType: 'cv-led-supply-24v',
  appliesTo: CV24_APPLIES,
  symptoms: ['trips-breaker-rcd', 'burning-smell'],
  hazards: ['mains', 'stored_energy'],
  summary: [
    'Find out which device tripped before you open the case. A breaker trip or a blown F1 is a line–neutral short: a shorted surge varistor Z1, a shorted bridge BR1 or a shorted primary MOSFET Q1. An RCD trip with F1 intact is current leaving to earth: moisture and tracking on a unit that has lived in a damp ceiling void (most of them, for these units), or a failed Y capacitor from the primary to the metal case.',
    '',
    'Job sheets often just say "tripped the electrics" — ask, or look at F1.',
  ].join('\n'),
  causes: [
    { key: 'moisture_tracking', name: 'Moisture and tracking to the case', prior: 0.3, detail: 'Corrosion, white salts, carbon tracks between primary tracks and the case.' },
    { key: 'mov_short', name: 'Surge varistor Z1 shorted', prior: 0.3, detail: 'After a surge; often cracked or scorched, and F1 blown.' },
    { key: 'bridge_or_fet_short', name: 'Bridge BR1 or MOSFET Q1 shorted', prior: 0.25, detail: 'F1 blown; check the bulk capacitor too.' },
    { key: 'ycap_leak', name: 'Y capacitor CY1 failed to the case', prior: 0.15, detail: 'Rare; a Y1-rated part is built to fail open.' },
  ],
  steps: [
    {
      key: 'which_device',
      title: 'Find out what tripped',
      instruction: 'Ask the customer or read the job sheet: breaker (MCB), RCD or plug fuse? Then check F1 with the unit unplugged: continuity across the fuse holder. F1 blown points to a line–neutral short (Z1, BR1, Q1); F1 intact with an RCD trip points to leakage to earth. Note both on the job.',
      minutes: 3,
    },
    {
      key: 'discharge',
      title: 'Unplug and discharge C3',
      instruction: CV24_DISCHARGE,
      measurement: { quantity: 'dc_voltage', unit: 'V', max: 5 },
      minutes: 2,
    },
    {
      key: 'visual',
      title: 'Inspect for moisture, tracking and a cracked varistor',
      instruction: 'Lid off, under the magnifier. White salts, green corrosion, water marks on the lid or carbon tracks between a primary track and a mounting screw: mark this step failed and photograph it. A cracked or blackened Z1 (the blue disc across the input) counts too.',
      verdicts: { fail: { causes: ['moisture_tracking', 'mov_short'] } },
      minutes: 6,
    },
    {
      key: 'insulation',
      title: 'Insulation test L+N to earth',
      instruction: 'Join L and N at the input terminals with a shorting link. Insulation tester at **500 V DC** between the link and the earth terminal. Good: **1 MΩ or more**, or the tester\'s over-range (common practice for Class I equipment). The Y capacitor does not conduct at DC; a low reading is tracking, moisture or a failed CY1.',
      measurement: { quantity: 'resistance', unit: 'MΩ', min: 1, openExpected: true },
      verdicts: { low: { causes: ['moisture_tracking', 'ycap_leak'] } },
      minutes: 5,
    },
    {
      key: 'mov',
      title: 'Measure Z1 with one leg lifted',
      instruction: 'Lift one leg of Z1. Meter on the highest resistance range across it, both ways. Good: **OL**, or above 10 MΩ. A low reading is a failed-short varistor. A varistor can read open and still be cracked: the visual check still counts.',
      measurement: { quantity: 'resistance', unit: 'MΩ', min: 10, openExpected: true },
      verdicts: { low: { causes: ['mov_short'] } },
      minutes: 4,
    },
    {
      key: 'bridge',
      title: 'Diode-test BR1 (lowest forward reading)',
      instruction: 'BR1 is the KBP-style bridge on the heat sink, pins marked ~ ~ + −. Meter on diode test: red on − to each ~, red on each ~ to +. Enter the **lowest** of the four. Good: **0.40–0.90 V**. Under 0.050 V one way and again reversed: shorted. (The − → + pair reads two drops, about 0.8–1.5 V, with C3 disconnected.)',
      measurement: { quantity: 'diode_drop', unit: 'V', min: 0.4, max: 0.9 },
      verdicts: { low: { causes: ['bridge_or_fet_short'] } },
      minutes: 6,
    },
    {
      key: 'q1',
      title: 'Diode-test primary MOSFET Q1',
      instruction: 'Q1 is the TO-220F on the same heat sink. Bridge G–S for a second. Red on **S**, black on **D**. Good body diode: **0.40–0.70 V**; reversed, OL; G–S OL both ways. Near 0 V both ways: shorted.',
      measurement: { quantity: 'diode_drop', unit: 'V', min: 0.4, max: 0.7 },
      verdicts: { low: { causes: ['bridge_or_fet_short'] } },
      minutes: 4,
    },
  ],
  parts: [
    { name: '14 mm 275 VAC metal-oxide varistor (Z1)', partNumber: 'HLS-8275', substitutes: ['14 mm 275–300 VAC MOV, 7.5 mm pitch'] },
    { name: 'T3.15A time-lag fuse, 5×20 mm ceramic (F1)', partNumber: 'HLS-7031', substitutes: [] },
    { name: '600 V 4 A bridge rectifier, KBP-style (BR1)', partNumber: 'HLS-1043', substitutes: ['600 V 4–6 A in-line bridge, same pitch'] },
    { name: 'N-channel MOSFET 650 V 10 A, TO-220F (Q1)', partNumber: 'HLS-2610', substitutes: ['650 V ≥ 10 A N-channel MOSFET, full-pack, RDS(on) ≤ 0.8 Ω'] },
    { name: '2.2 nF Y1 capacitor, 300 VAC (CY1)', partNumber: 'HLS-5222Y', substitutes: ['2.2 nF Y1 only — never an X-rated or unrated part'] },
  ],
  fix: [
    'Replace the failed part and F1 together. A unit with moisture damage: clean with isopropyl alcohol, dry for 24 h at 40 °C, and replace anything corroded; if carbon tracks reach the case side, it is not economical to repair.',
    '',
    'Tell the customer where the water came from if the job sheet says — the next unit will trip too. Work on the installation is for a licensed electrician.',
  ].join('\n'),
  verification: [
    LIVE_BENCH,
    '',
    'Earth continuity case to earth pin ≤ 0.1 Ω plus the cable; insulation L+N to earth ≥ 1 MΩ at 500 V DC; 30 min at 2.5 A on the bench RCD without a trip; output 24.0 V ±0.5 V. Record all four.',
  ].join('\n'),
}

// ---------------------------------------------------------------------------------------------
// Kemlow PX-10 (PIR occupancy switch)
// ---------------------------------------------------------------------------------------------

const PX10_APPLIES = ['Kemlow PX-10 ceiling PIR, 10 A relay', 'Kemlow PX-10L (long-range lens)']

const px10StaysOnV2: Content = {
  title: 'PX-10 stays on after the time-out',
  deviceType: 'pir-occupancy-switch',
  appliesTo: PX10_APPLIES,
  symptoms: ['stays-on', 'switches-on-by-itself'],
  hazards: ['mains'],
  summary: [
    'Since the housing association refitted its corridors with LED panels, most PX-10s that stay on have welded relay contacts: the panels\' drivers draw an inrush many times their running current at every switch-on, and the standard relay contacts tack together. Check the relay at rest first — it takes ten seconds and settles most jobs.',
    '',
    'If the relay opens, the PX-10 is being told to stay on: a relay driver Q2 shorted, a time-out trimmer RV2 gone open (the MCU reads that as the maximum setting), or something on site re-triggering it — a heater, a draught from a door closer, sunlight on a floor.',
  ].join('\n'),
  causes: [
    { key: 'relay_welded', name: 'Relay K1 contacts welded', prior: 0.5, detail: 'LED driver inrush; contact faces pitted and tacked.' },
    { key: 'false_triggers', name: 'Re-triggered by heat or draughts on site', prior: 0.2, detail: 'Not a fault in the unit; the walk test on the bench passes.' },
    { key: 'timeout_pot', name: 'Time-out trimmer RV2 open or worn', prior: 0.15, detail: 'The MCU reads an open trimmer as the maximum, 30 min.' },
    { key: 'relay_driver_short', name: 'Relay driver transistor Q2 shorted', prior: 0.15, detail: 'Coil energised whatever the MCU says.' },
  ],
  steps: [
    {
      key: 'relay_rest',
      title: 'Check the relay at rest, unplugged',
      instruction: [
        'Unplug the unit (or, if it is still in the ceiling: isolate, lock off and prove dead — fixed wiring, for a licensed electrician where local rules require one).',
        '',
        'Meter on resistance across the **L-in** and **L-out** terminals. With no power the relay is at rest and its normally-open contact must be open. Good: **OL**. Under 1 Ω: welded contacts.',
      ].join('\n'),
      measurement: { quantity: 'resistance', unit: 'Ω', openExpected: true },
      verdicts: { low: { causes: ['relay_welded'] } },
      minutes: 2,
    },
    {
      key: 'walk_test',
      title: 'Cover the lens and time it on the bench',
      instruction: [
        LIVE_BENCH,
        NOT_ISOLATED,
        '',
        'Load: a 60 W halogen test lamp. Set the time to minimum (10 s) and the lux dial to the moon symbol (works in daylight). Walk past once to switch it on, then cover the lens with the opaque bench cap. Good: the lamp goes off 10–20 s later. If it does, the unit is fine and something on site keeps re-triggering it — mark this step passed and go to the site check.',
      ].join('\n'),
      verdicts: { fail: { causes: ['relay_driver_short', 'timeout_pot'] } },
      minutes: 6,
    },
    {
      key: 'coil_drive',
      title: 'Measure the relay coil voltage after the time-out',
      instruction: [
        LIVE_BENCH,
        NOT_ISOLATED,
        '',
        'Lens covered, 20 s after the last movement. Differential probe or a CAT II meter with insulated probe tips across the K1 coil pins (the two thin pins at the back of the relay). Good: **1.0 V DC or less** (coil off). About 12 V: the coil is still driven.',
      ].join('\n'),
      measurement: { quantity: 'dc_voltage', unit: 'V', max: 1.0 },
      verdicts: { high: { causes: ['relay_driver_short', 'timeout_pot'] } },
      minutes: 5,
    },
    {
      key: 'timeout_pot',
      title: 'Measure the time-out trimmer RV2',
      instruction: 'Unplug and wait a minute: the dropper capacitor C1 holds the mains peak if its bleeder is open — discharge it as in the no-detection procedure. RV2 is the trimmer marked TIME. Meter on resistance across its outer pins. Good: **1 MΩ ±20 %**. Then sweep the wiper to a middle pin reading: it must change smoothly. OL across the outer pins means an open track.',
      measurement: { quantity: 'resistance', unit: 'MΩ', nominal: 1, tolerancePct: 20 },
      verdicts: { high: { causes: ['timeout_pot'] }, open: { causes: ['timeout_pot'] } },
      minutes: 5,
    },
    {
      key: 'site_check',
      title: 'Ask about the site',
      instruction: 'If everything above passed: ask the housing association what the sensor looks at. Heaters, hot-air vents, a door closer that lets draughts in, sunlight falling on a floor within 2 m of the sensor, or an LED panel driver in its view: mark this step failed and advise masking the lens segment or moving the sensor.',
      verdicts: { fail: { causes: ['false_triggers'] } },
      minutes: 10,
    },
  ],
  parts: [
    { name: '12 V coil SPNO power relay, 16 A 250 VAC, AgSnO₂ contacts, PCB mount (K1)', partNumber: 'HLS-9216', substitutes: ['12 V coil relay with AgSnO₂ or tungsten pre-make contacts rated for lamp and LED-driver inrush — preferred over the original AgNi part'] },
    { name: 'NPN small-signal transistor, 45 V 0.5 A, SOT-23 (Q2)', partNumber: 'HLS-2045', substitutes: ['45–60 V ≥ 0.5 A NPN, SOT-23, hFE ≥ 100'] },
    { name: '1 MΩ trimmer, top-adjust, 6 mm (RV2)', partNumber: 'HLS-3105', substitutes: [] },
  ],
  fix: 'Replace K1 with the inrush-rated relay, not the original type, and write on the job sheet that the load is LED panels. Replace Q2 or RV2 if they failed. For site re-triggering, return the unit tested good with the advice.',
  verification: [
    LIVE_BENCH,
    NOT_ISOLATED,
    '',
    'Walk test: on within 1 s of movement, off 10–20 s after covering the lens at the minimum time; twenty cycles into the bench LED-panel load without sticking. Relay at rest reads OL across L-in and L-out afterwards.',
  ].join('\n'),
}

const px10StaysOnV1 = revise(px10StaysOnV2, (c) => {
  dropSteps(c, 'relay_rest')
  setPriors(c, { relay_welded: 0.2, false_triggers: 0.35, timeout_pot: 0.25, relay_driver_short: 0.2 })
  c.causes = [causeOf(c, 'false_triggers'), causeOf(c, 'timeout_pot'), causeOf(c, 'relay_driver_short'), causeOf(c, 'relay_welded')]
  c.symptoms = ['stays-on']
  c.summary = 'A PX-10 that stays on is usually being re-triggered on site, or its time-out circuit is faulty. Walk-test it on the bench first, then check the coil drive and the time-out trimmer; welded relay contacts are the last thing to check.'
  stepOf(c, 'walk_test').verdicts = { fail: { causes: ['relay_driver_short', 'timeout_pot', 'relay_welded'] } }
  c.parts = (c.parts ?? []).map(p => p.partNumber === 'HLS-9216' ? { ...p, name: '12 V coil SPNO power relay, 16 A 250 VAC, PCB mount (K1)', substitutes: ['Same relay from a donor PX-10'] } : p)
  c.fix = 'Replace K1, Q2 or RV2 as found. For site re-triggering, return the unit tested good with the advice.'
})

const px10NoDetect: Content = {
  title: 'PX-10 does not switch on when someone walks in',
  deviceType: 'pir-occupancy-switch',
  appliesTo: PX10_APPLIES,
  symptoms: ['no-motion-detect', 'dead-no-output'],
  hazards: ['mains', 'stored_energy'],
  summary: [
    'The PX-10 runs from a capacitive dropper: the X2 capacitor C1 (0.68 µF) sets how much current the 12 V rail can deliver, and the relay coil takes most of it. X2 film capacitors lose capacitance slowly as their self-healing film burns away; once C1 is down by a third, the rail collapses the moment the relay pulls in, the MCU resets, and the unit looks as if it never saw you. That is the classic PX-10 fault.',
    '',
    'Before opening it: a lux setting too low makes it ignore movement in daylight, and a dirty or cracked lens shortens the range. A dead PX-10 with no LED blink at power-up is the fusible resistor R1 in series with C1. A damaged PIR element is the rare one.',
  ].join('\n'),
  causes: [
    { key: 'dropper_cap_low', name: 'Dropper capacitor C1 lost capacitance', prior: 0.4, detail: 'Rail sags when the relay pulls in; unit resets.' },
    { key: 'lux_setting', name: 'Lux threshold set too low', prior: 0.25, detail: 'Works at night only. Not a fault.' },
    { key: 'lens_dirty', name: 'Lens dirty, painted over or cracked', prior: 0.1, detail: 'Short range; decorators are the usual suspects.' },
    { key: 'pir_sensor', name: 'PIR element damaged', prior: 0.15, detail: 'Moisture or a knock; the test LED never blinks.' },
    { key: 'dropper_res_open', name: 'Fusible resistor R1 open', prior: 0.1, detail: 'Unit completely dead; often after a surge.' },
  ],
  steps: [
    {
      key: 'lux',
      title: 'Walk-test with the lux dial at the moon symbol',
      instruction: [
        LIVE_BENCH,
        NOT_ISOLATED,
        '',
        'Before opening: note the lux dial position on the job, then turn it to the moon symbol (works in daylight) and walk across the bench at 3 m. If the unit now detects you, mark this step failed: the threshold was set too low for the site.',
      ].join('\n'),
      verdicts: { fail: { causes: ['lux_setting'] } },
      minutes: 5,
    },
    {
      key: 'lens',
      title: 'Look at the lens against the light',
      instruction: 'Unplugged. Hold the lens up to the bench lamp. Paint, grime or a crack: mark this step failed. Decorators\' emulsion is invisible from below and blocks infrared completely.',
      verdicts: { fail: { causes: ['lens_dirty'] } },
      minutes: 2,
    },
    {
      key: 'supply_rail',
      title: 'Measure the 12 V rail while the relay pulls in',
      instruction: [
        LIVE_BENCH,
        NOT_ISOLATED,
        '',
        'Differential probe, or a meter with insulated probe tips held in a fixture, across the reservoir capacitor C5 (470 µF 25 V). Walk past the sensor and watch the reading as the relay pulls in. Enter the lowest value you see. Good: **11.0–13.0 V**. A dip below 11 V, or a click followed by the test LED restarting, is a weak dropper.',
      ].join('\n'),
      measurement: { quantity: 'dc_voltage', unit: 'V', min: 11, max: 13 },
      verdicts: { low: { causes: ['dropper_cap_low', 'dropper_res_open'] } },
      minutes: 6,
    },
    {
      key: 'discharge',
      title: 'Unplug and discharge C1',
      instruction: dischargeInstruction('the dropper capacitor C1 (0.68 µF X2)', 'If its 1 MΩ bleeder R2 is open it can hold the mains peak for minutes: a small energy, but a sharp shock.'),
      measurement: { quantity: 'dc_voltage', unit: 'V', max: 5 },
      minutes: 2,
    },
    {
      key: 'c1',
      title: 'Measure C1 out of circuit',
      instruction: 'C1 is the large yellow box marked **684 X2** (0.68 µF). Lift one leg and measure on the capacitance range. Good: **0.61–0.75 µF** (±10 %). Anything under 0.55 µF will not hold the relay in.',
      measurement: { quantity: 'capacitance', unit: 'µF', min: 0.61, max: 0.75 },
      verdicts: { low: { causes: ['dropper_cap_low'] } },
      minutes: 6,
    },
    {
      key: 'r1',
      title: 'Measure fusible resistor R1',
      instruction: 'R1 is the 100 Ω 1 W fusible resistor in series with C1. Meter on resistance across its leads. Good: **100 Ω ±5 %**. OL: replace it, and check C5 and the zener D3 for a short before you power up.',
      measurement: { quantity: 'resistance', unit: 'Ω', nominal: 100, tolerancePct: 5 },
      verdicts: { high: { causes: ['dropper_res_open'] }, open: { causes: ['dropper_res_open'] } },
      minutes: 3,
    },
    {
      key: 'pir_swap',
      title: 'Try the bench PIR element',
      instruction: 'Only if the supply is good and the test LED never blinks on movement. Unplug; plug the bench PIR element (on its three-pin socket) in place of the unit\'s own and walk-test again live. If it now detects, mark this step failed.',
      verdicts: { fail: { causes: ['pir_sensor'] } },
      minutes: 8,
    },
  ],
  parts: [
    { name: '0.68 µF 305 VAC X2 film capacitor, 22.5 mm pitch (C1)', partNumber: 'HLS-5684X', substitutes: ['0.68 µF 275 VAC X2, 22.5 mm pitch — X2-rated only'] },
    { name: '100 Ω 1 W fusible resistor (R1)', partNumber: 'HLS-4101F', substitutes: ['100 Ω 1 W flameproof fusible wirewound'] },
    { name: 'Dual-element PIR sensor, TO-5, 3-pin (socketed)', partNumber: 'HLS-9301', substitutes: ['PIR element from a donor PX-10'] },
  ],
  fix: 'Replace C1 with an X2-rated part of the same value — a larger one overloads the zener. Replace R1 only after checking C5 and D3. Clean a dirty lens with mild soap and water; replace a cracked one.',
  verification: [
    LIVE_BENCH,
    NOT_ISOLATED,
    '',
    'Rail ≥ 11.0 V while the relay pulls in; detects a walk across the bench at 5 m; ten on/off cycles without a reset.',
  ].join('\n'),
}

// ---------------------------------------------------------------------------------------------
// Brixa QC30 (30 W USB-C PD charger)
// ---------------------------------------------------------------------------------------------

const QC30_APPLIES = ['Brixa QC30 (EU plug)', 'Brixa QC30-EU, board rev 2']
const QC30_DISCHARGE = dischargeInstruction('the bulk capacitor C1 (33 µF 400 V)', 'At the 325 V mains peak it holds about 1.7 J, and it sits right under the pins you will hold.')
const QC30_OPENING = 'The case is ultrasonically welded: split it along the seam with the thin blade and the case spreader, working away from your hand. If the case cracks anywhere other than the seam, stop — the case is part of the insulation, and the unit is not economical to repair.'

const qc30HiccupV3: Content = {
  title: 'QC30 hiccups: output comes and goes',
  deviceType: 'usb-c-charger-30w',
  appliesTo: QC30_APPLIES,
  symptoms: ['charger-hiccup'],
  hazards: ['mains', 'stored_energy'],
  summary: [
    'A hiccup is the controller protecting itself: it starts, sees a fault, stops, and tries again every second or two. On the QC30 the fault is usually on the output: the 680 µF output capacitor C10 sits against the transformer, dries out, and its rising ESR lets the ripple trip the protection. The next commonest is the controller\'s own supply capacitor C5 drying out, so U1 browns out under load.',
    '',
    'A shorted synchronous-rectifier MOSFET Q2, or lint and metal dust bridging VBUS to GND inside the USB-C receptacle, puts a real short on the output and hiccups at any load. Check the receptacle before you open the case — it is the only fault you can find without cutting the weld.',
  ].join('\n'),
  causes: [
    { key: 'output_cap_esr', name: 'Output capacitor C10 high ESR', prior: 0.35, detail: 'Ripple trips the protection; often with a domed top.' },
    { key: 'vcc_cap_dry', name: 'Controller supply capacitor C5 dried out', prior: 0.3, detail: 'U1 browns out under load and restarts.' },
    { key: 'receptacle_short', name: 'Debris bridging VBUS and GND in the receptacle', prior: 0.15, detail: 'Pocket lint with metal dust; check before opening.' },
    { key: 'sr_fet_short', name: 'Synchronous rectifier Q2 shorted', prior: 0.2, detail: 'A hard short across the secondary winding.' },
  ],
  steps: [
    {
      key: 'confirm',
      title: 'Confirm the hiccup at 5 V, no load',
      instruction: [
        LIVE_BENCH,
        '',
        'Plug the QC30 into the bench isolating transformer. USB-C tester in the port: it presents itself as a sink, so the charger switches VBUS on at 5 V; nothing connected beyond it. Meter on DC volts on the tester\'s VBUS pins. Good: a steady **4.75–5.50 V**. A reading that climbs and collapses every 1–3 s, or a tester display that keeps restarting, is the hiccup — enter the lowest value you see.',
      ].join('\n'),
      measurement: { quantity: 'dc_voltage', unit: 'V', min: 4.75, max: 5.5 },
      verdicts: { low: { causes: ['output_cap_esr', 'vcc_cap_dry', 'receptacle_short', 'sr_fet_short'] } },
      minutes: 5,
    },
    {
      key: 'receptacle',
      title: 'Check the receptacle for a short, unplugged',
      instruction: 'Unplug. Look into the USB-C receptacle under the magnifier with a torch: lint, grit or a bent contact. Then meter on resistance between the VBUS and GND pins of the bench breakout plug inserted in the port (red on VBUS). The output capacitors charge from the meter, so the reading climbs. Good: **OL**, or above 1 kΩ once it settles. Under 1 kΩ: clean the receptacle with a dry nylon pick and measure again; still low after cleaning, note it and carry on — the short is behind the port.',
      measurement: { quantity: 'resistance', unit: 'kΩ', min: 1, openExpected: true },
      verdicts: { low: { causes: ['receptacle_short'] } },
      minutes: 4,
    },
    {
      key: 'discharge',
      title: 'Open the case and discharge C1',
      instruction: `${QC30_OPENING}\n\n${QC30_DISCHARGE}`,
      measurement: { quantity: 'dc_voltage', unit: 'V', max: 5 },
      minutes: 12,
    },
    {
      key: 'sr_fet',
      title: 'Diode-test the synchronous rectifier Q2',
      instruction: 'Q2 is the 5×6 mm flat MOSFET on the secondary side next to the transformer\'s output pins. Red on **S** (the three pins on one side, joined to GND), black on **D** (the large pad). Good body diode: **0.40–0.70 V**; reversed, OL (it may count up while C10 charges). Near 0 V both ways: Q2 is shorted.',
      measurement: { quantity: 'diode_drop', unit: 'V', min: 0.4, max: 0.7 },
      verdicts: { low: { causes: ['sr_fet_short'] } },
      minutes: 4,
    },
    {
      key: 'output_esr',
      title: 'Measure the ESR of C10',
      instruction: 'C10 is the 680 µF 25 V electrolytic against the transformer. ESR meter (100 kHz) across its leads; in circuit is fine. Good: **0.12 Ω or less**. A domed top is a fail whatever the meter says.',
      measurement: { quantity: 'resistance', unit: 'Ω', max: 0.12 },
      verdicts: { high: { causes: ['output_cap_esr'] } },
      minutes: 3,
    },
    {
      key: 'vcc_cap',
      title: 'Measure C5 out of circuit',
      instruction: 'C5 is the 22 µF 50 V electrolytic next to U1 on the primary side. Desolder it and measure on the capacitance range. Good: **17.6–26.4 µF** (22 µF ±20 %).',
      measurement: { quantity: 'capacitance', unit: 'µF', min: 17.6, max: 26.4 },
      verdicts: { low: { causes: ['vcc_cap_dry'] } },
      minutes: 8,
    },
  ],
  parts: [
    { name: '680 µF 25 V electrolytic, 105 °C low-ESR, 8×16 mm (C10)', partNumber: 'HLS-5687', substitutes: ['470 µF 25 V solid polymer, 8 mm diameter (lower ESR; fits the same pads)'] },
    { name: '22 µF 50 V electrolytic, 105 °C, 5×11 mm (C5)', partNumber: 'HLS-5226', substitutes: ['22–33 µF 50 V 105 °C, same footprint'] },
    { name: 'N-channel MOSFET 100 V, 5×6 mm DFN, RDS(on) ≤ 10 mΩ (Q2)', partNumber: 'HLS-2100D', substitutes: ['100 V N-channel, 5×6 mm DFN, RDS(on) ≤ 10 mΩ, gate charge ≤ 40 nC'] },
    { name: 'Case adhesive, two-part, rated for mains enclosures', partNumber: 'HLS-0930', substitutes: [] },
  ],
  fix: 'Replace C10 (a polymer part is better) and C5 as found; replace Q2 if shorted and check C10 too — a shorted Q2 often follows a failing C10. Close the case with the rated two-part adhesive and clamp it for the full cure time.',
  verification: [
    LIVE_BENCH,
    '',
    'Steady 4.75–5.50 V at no load; 20 V 1.5 A for 30 min on the electronic load without a restart; case ≤ 60 °C. Insulation from the AC pins (joined) to the USB-C shell ≥ 2 MΩ at 500 V DC (common practice for Class II equipment). Pull test on the closed case.',
  ].join('\n'),
}

const qc30HiccupV2 = revise(qc30HiccupV3, (c) => {
  dropSteps(c, 'sr_fet', 'receptacle')
  dropCauses(c, 'sr_fet_short', 'receptacle_short')
  setPriors(c, { output_cap_esr: 0.6, vcc_cap_dry: 0.4 })
  c.summary = 'A hiccup is the controller protecting itself. On the QC30 the output capacitor C10 dries out and its rising ESR trips the protection; the controller\'s supply capacitor C5 is the next suspect.'
  c.parts = (c.parts ?? []).filter(p => p.partNumber !== 'HLS-2100D')
  c.fix = 'Replace C10 (a polymer part is better) and C5 as found. Close the case with the rated two-part adhesive and clamp it for the full cure time.'
})

const qc30HiccupV1 = revise(qc30HiccupV2, (c) => {
  dropSteps(c, 'discharge')
  // The first ESR limit let tired capacitors through; revision 2 tightened it after comebacks.
  const esr = stepOf(c, 'output_esr')
  esr.measurement = { quantity: 'resistance', unit: 'Ω', max: 0.5 }
  esr.instruction = esr.instruction.replace('**0.12 Ω or less**', '**0.5 Ω or less**')
  stepOf(c, 'output_esr').instruction = `${QC30_OPENING}\n\n${esr.instruction}`
  c.causes = [causeOf(c, 'vcc_cap_dry'), causeOf(c, 'output_cap_esr')]
  setPriors(c, { vcc_cap_dry: 0.5, output_cap_esr: 0.5 })
})

const qc30SlowChargeV1: Content = {
  title: 'QC30 charges slowly, never leaves 5 V',
  deviceType: 'usb-c-charger-30w',
  appliesTo: QC30_APPLIES,
  symptoms: ['charges-slowly'],
  hazards: ['mains', 'stored_energy'],
  summary: [
    'USB Power Delivery starts every connection at 5 V and only raises VBUS after the charger and the device agree over the CC wire. No agreement, no fast charge — the charger still gives 5 V, so it looks like "slow charging". The CC path has three links: the cable, the charger\'s receptacle (CC1 on pin A5, CC2 on B5) and the PD controller U5.',
    '',
    'Nearly half of these come in with a faulty cable and a good charger. Test with the customer\'s cable and then with the bench cable before opening anything; a fast-charge failure on both points into the charger: a CC contact bent or burnt in the receptacle, more often than a failed U5.',
  ].join('\n'),
  causes: [
    { key: 'cable_fault', name: 'Customer\'s cable (CC wire broken or cable not rated)', prior: 0.35, detail: 'The charger is fine; replace the cable.' },
    { key: 'receptacle_cc_damaged', name: 'CC contact bent, burnt or cracked in the receptacle', prior: 0.4, detail: 'Check both CC1 and CC2: one orientation may still work.' },
    { key: 'pd_controller_fault', name: 'PD controller U5 faulty', prior: 0.25, detail: 'Negotiates 9 V but not 20 V, or nothing at all.' },
  ],
  steps: [
    {
      key: 'customer_cable',
      title: 'Request 9 V through the customer\'s cable',
      instruction: [
        LIVE_BENCH,
        '',
        'USB-C PD tester at the far end of the customer\'s cable, set to request the 9 V fixed supply. Meter on DC volts on the tester\'s VBUS pins. Good: **8.55–9.45 V** (9 V ±5 %, the USB PD fixed-supply tolerance). Try both plug orientations.',
      ].join('\n'),
      measurement: { quantity: 'dc_voltage', unit: 'V', min: 8.55, max: 9.45 },
      verdicts: { low: { causes: ['cable_fault', 'receptacle_cc_damaged', 'pd_controller_fault'] } },
      minutes: 5,
    },
    {
      key: 'bench_cable',
      title: 'Request 9 V through the bench cable',
      instruction: 'Same test with the bench 5 A e-marked cable, both orientations. Enter the lower reading. Good: **8.55–9.45 V**. If it passes here but failed on the customer\'s cable, the cable is the fault — record it and stop.',
      measurement: { quantity: 'dc_voltage', unit: 'V', min: 8.55, max: 9.45 },
      verdicts: { in_range: { causes: ['cable_fault'] }, low: { causes: ['receptacle_cc_damaged', 'pd_controller_fault'] } },
      minutes: 4,
    },
    {
      key: 'inspect',
      title: 'Inspect the receptacle',
      instruction: 'Unplug. Look into the receptacle under the magnifier with a torch. A bent, flattened or brown contact on the middle row (A5/B5 are the fifth contact from the left on each side of the tongue): mark this step failed.',
      verdicts: { fail: { causes: ['receptacle_cc_damaged'] } },
      minutes: 3,
    },
    {
      key: 'cc_path',
      title: 'Measure CC1 and CC2 to U5',
      instruction: `${QC30_OPENING}\n\n${QC30_DISCHARGE.split('\n\n')[0]}\n\nMeter on continuity or the 200 Ω range, leads zeroed (REL). Bench breakout plug in the port: from its CC1 pad to test point TP5 (U5 CC1), then from CC2 to TP6 (U5 CC2). Enter the higher reading. Good: **1 Ω or less**.`,
      measurement: { quantity: 'continuity', unit: 'Ω', max: 1 },
      verdicts: { high: { causes: ['receptacle_cc_damaged'] }, open: { causes: ['receptacle_cc_damaged'] } },
      minutes: 12,
    },
    {
      key: 'pd_20v',
      title: 'Request 20 V at 1.5 A',
      instruction: [
        LIVE_BENCH,
        '',
        'Board back in its case halves, held in the case clamp (not yet bonded); bench cable; PD tester requesting 20 V with the electronic load at 1.5 A. Meter on DC volts at the tester. Good: **19.0–21.0 V**. No 20 V with a good CC path: U5.',
      ].join('\n'),
      measurement: { quantity: 'dc_voltage', unit: 'V', min: 19, max: 21 },
      verdicts: { low: { causes: ['pd_controller_fault'] } },
      minutes: 6,
    },
  ],
  parts: [
    { name: 'USB-C receptacle, 24-pin, mid-mount for 1.6 mm board', partNumber: 'HLS-9124', substitutes: ['24-pin mid-mount USB-C receptacle with the same shell tabs'] },
    { name: 'PD controller board assembly (U5 side), from donor QC30', partNumber: 'HLS-D-QC30', substitutes: [] },
  ],
  fix: 'Cable: give the customer the result and recommend a rated cable. Receptacle: replace it with hot air and low-melt alloy, shell tabs soldered through. U5: not repairable at component level; fit a donor board or mark not economical to repair.',
  verification: [
    LIVE_BENCH,
    '',
    '9 V and 20 V negotiate in both orientations on the bench cable; 20 V 1.5 A for 15 min without a drop to 5 V. Insulation AC pins to USB-C shell ≥ 2 MΩ at 500 V DC. Case bonded and pull-tested.',
  ].join('\n'),
}

const qc30SlowChargeRejected = revise(qc30SlowChargeV1, (c) => {
  c.steps.unshift({
    key: 'reflow',
    title: 'Reflow U5 before testing',
    instruction: `${QC30_OPENING}\n\nHot air at 350 °C over U5 and the receptacle pins for 30 s, with flux. Then carry on with the tests below.`,
  })
  c.summary = `${c.summary}\n\nMost receptacle and U5 faults are cracked joints, so reflowing first saves time.`
})

// ---------------------------------------------------------------------------------------------
// The procedures and their histories
// ---------------------------------------------------------------------------------------------

export const DEMO_PROCEDURES: DemoProcedure[] = [
  {
    slug: 'vr240-stuck-at-full',
    createdBy: 'tomasz',
    revisions: [
      { author: 'tomasz', state: 'superseded', reviewer: 'priya', daysAgo: 168, changeNote: 'First version: Q1 and the potentiometer.', content: vr240DoesNotDimV1 },
      {
        author: 'tomasz',
        state: 'superseded',
        reviewer: 'priya',
        daysAgo: 96,
        changeNote: 'Added the BR1 diode test and the shorted-bridge cause; Q1 body-diode window corrected from 0.30–0.80 V to 0.40–0.70 V.',
        content: vr240DoesNotDimV2,
        comments: [
          { by: 'priya', stepKey: 'bridge', body: 'Say which pair not to use in circuit — Ade measured − to + and got Q1\'s body diode.', resolved: true },
          { by: 'tomasz', stepKey: 'bridge', body: 'Added the line about the − → + pair.', resolved: true },
        ],
      },
      {
        author: 'tomasz',
        state: 'published',
        reviewer: 'priya',
        daysAgo: 31,
        changeNote: 'Confirm step now needs a true-RMS meter and a ≤ 120 V limit (was 150 V); added the gate-drive check and the U1 cause; bridge check moved before the potentiometer.',
        content: vr240DoesNotDimV3,
      },
    ],
  },
  {
    slug: 'vr240-half-cycle-flicker',
    createdBy: 'tomasz',
    revisions: [
      { author: 'tomasz', state: 'published', reviewer: 'priya', daysAgo: 74, changeNote: 'First version.', content: vr240HalfCycleV1 },
      {
        author: 'tomasz',
        state: 'in_review',
        daysAgo: 3,
        changeNote: 'Added the highest-reading bridge check for an open diode and the R5 zero-cross check, after two boards came back with R5 open.',
        content: vr240HalfCycleV2,
        comments: [
          { by: 'priya', stepKey: 'r5', body: 'Good catch. Is 0.5 W really enough for R5, or should the part list say two in series?' },
        ],
      },
    ],
  },
  {
    slug: 'vr240-glows-when-off',
    createdBy: 'tomasz',
    revisions: [
      { author: 'tomasz', state: 'published', reviewer: 'priya', daysAgo: 58, changeNote: 'First version.', content: vr240GlowsWhenOff },
    ],
  },
  {
    slug: 'vr240-half-cycle-flow',
    createdBy: 'tomasz',
    revisions: [
      { author: 'tomasz', state: 'published', reviewer: 'priya', daysAgo: 34, changeNote: 'First version: the half-cycle diagnosis as a flow, capture first.', content: vr240HalfCycleFlow },
    ],
  },
  {
    slug: 'vr240-runs-hot',
    createdBy: 'tomasz',
    revisions: [
      { author: 'tomasz', state: 'in_review', daysAgo: 2, changeNote: 'New procedure for hot or scorched VR-240s.', content: vr240RunsHot },
    ],
  },
  {
    slug: 'pd400-dead-after-lamp-failure',
    createdBy: 'tomasz',
    revisions: [
      { author: 'tomasz', state: 'superseded', reviewer: 'priya', daysAgo: 142, changeNote: 'First version.', content: pd400DeadV1 },
      {
        author: 'tomasz',
        state: 'published',
        reviewer: 'priya',
        daysAgo: 44,
        changeNote: 'Added the TR1 check before a new fuse goes in (two comebacks with F1 blown again within a week); new cause "TR1 shorted"; priors re-balanced.',
        content: pd400DeadV2,
      },
    ],
  },
  {
    slug: 'pd400-buzzes-low',
    createdBy: 'tomasz',
    revisions: [
      { author: 'tomasz', state: 'published', reviewer: 'priya', daysAgo: 66, changeNote: 'First version.', content: pd400BuzzV1 },
      {
        author: 'tomasz',
        state: 'changes_requested',
        reviewer: 'priya',
        daysAgo: 7,
        changeNote: 'Added a live press test on L1; widened the C2 window; hot-melt for re-seating L1.',
        content: pd400BuzzV2,
        comments: [
          { by: 'priya', stepKey: 'choke_press', body: 'No pressing on a live board, even with a plastic tool: the choke is at mains potential and the tool slips. Please drop this step — the unplugged inspection already finds loose chokes.' },
          { by: 'priya', stepKey: 'c2_timing', body: '80–120 nF is ±20 %. C2 is a ±10 % film part and the old window was right; a C2 at 85 nF shifts the firing angle enough to buzz.' },
          { by: 'priya', body: 'Hot-melt softens at the temperatures L1 reaches at 400 W. Keep the neutral-cure silicone from revision 1, and keep the LED pairing advice in the fix.' },
          { by: 'tomasz', stepKey: 'choke_press', body: 'Fair. I will take it out and put the photo of a loose tie on the inspection step instead.' },
        ],
      },
    ],
  },
  {
    slug: 'pd400-scorch-marks',
    createdBy: 'tomasz',
    revisions: [
      { author: 'tomasz', state: 'published', reviewer: 'priya', daysAgo: 51, changeNote: 'First version.', content: pd400Scorch },
    ],
  },
  {
    slug: 'pd250-stuck-at-full',
    retired: true,
    createdBy: 'tomasz',
    revisions: [
      { author: 'tomasz', state: 'published', reviewer: 'priya', daysAgo: 410, changeNote: 'First version.', content: pd250DoesNotDim },
    ],
  },
  {
    slug: 'cc350-dead',
    createdBy: 'tomasz',
    revisions: [
      { author: 'tomasz', state: 'superseded', reviewer: 'priya', daysAgo: 203, changeNote: 'First version.', content: cc350DeadV1 },
      {
        author: 'tomasz',
        state: 'superseded',
        reviewer: 'priya',
        daysAgo: 117,
        changeNote: 'Added the start-up resistor check (Mika found three units with R1 open) and a discharge step before any probe goes on the board.',
        content: cc350DeadV2,
      },
      {
        author: 'priya',
        state: 'published',
        reviewer: 'sam',
        daysAgo: 22,
        changeNote: 'Added the D5 check and the series-lamp power-up; C4 window corrected from ±10 % to ±20 % (the part is a 20 % electrolytic and good ones were failing).',
        content: cc350DeadV3,
      },
    ],
  },
  {
    slug: 'cc350-flicker-when-dimmed',
    createdBy: 'tomasz',
    revisions: [
      { author: 'tomasz', state: 'published', reviewer: 'priya', daysAgo: 39, changeNote: 'First version.', content: cc350FlickerLow },
    ],
  },
  {
    slug: 'cv24-output-low',
    createdBy: 'tomasz',
    revisions: [
      { author: 'tomasz', state: 'published', reviewer: 'priya', daysAgo: 63, changeNote: 'First version.', content: cv24OutputLowV1 },
      { author: 'tomasz', state: 'draft', daysAgo: 1, changeNote: 'Adding an output ripple check at full load.', content: cv24OutputLowDraft },
    ],
  },
  {
    slug: 'cv24-trips-rcd',
    createdBy: 'priya',
    revisions: [
      { author: 'priya', state: 'published', reviewer: 'sam', daysAgo: 27, changeNote: 'First version.', content: cv24TripsRcd },
    ],
  },
  {
    slug: 'px10-stays-on',
    createdBy: 'tomasz',
    revisions: [
      { author: 'tomasz', state: 'superseded', reviewer: 'priya', daysAgo: 131, changeNote: 'First version.', content: px10StaysOnV1 },
      {
        author: 'tomasz',
        state: 'published',
        reviewer: 'priya',
        daysAgo: 36,
        changeNote: 'Relay-at-rest check moved to the front after the LED-panel refit: welded contacts are now the commonest cause (prior 0.2 → 0.5). Inrush-rated relay listed as the replacement; "switches on by itself" added as a symptom.',
        content: px10StaysOnV2,
      },
    ],
  },
  {
    slug: 'px10-no-detection',
    createdBy: 'tomasz',
    revisions: [
      { author: 'tomasz', state: 'published', reviewer: 'priya', daysAgo: 88, changeNote: 'First version.', content: px10NoDetect },
    ],
  },
  {
    slug: 'qc30-hiccup',
    createdBy: 'tomasz',
    revisions: [
      { author: 'tomasz', state: 'superseded', reviewer: 'priya', daysAgo: 154, changeNote: 'First version.', content: qc30HiccupV1 },
      {
        author: 'tomasz',
        state: 'superseded',
        reviewer: 'priya',
        daysAgo: 101,
        changeNote: 'C10 ESR limit tightened from 0.5 Ω to 0.12 Ω: two capacitors at 0.3 Ω passed and the chargers came back. Added the discharge step; output capacitor listed first.',
        content: qc30HiccupV2,
      },
      {
        author: 'tomasz',
        state: 'published',
        reviewer: 'priya',
        daysAgo: 25,
        changeNote: 'Added the receptacle check (before opening the case) and the Q2 check, with their causes.',
        content: qc30HiccupV3,
      },
    ],
  },
  {
    slug: 'qc30-stays-at-5v',
    createdBy: 'tomasz',
    revisions: [
      { author: 'tomasz', state: 'published', reviewer: 'priya', daysAgo: 47, changeNote: 'First version.', content: qc30SlowChargeV1 },
      {
        author: 'tomasz',
        state: 'rejected',
        reviewer: 'priya',
        daysAgo: 10,
        changeNote: 'Reflow U5 and the receptacle first: most of these are cracked joints.',
        content: qc30SlowChargeRejected,
        comments: [
          { by: 'priya', stepKey: 'reflow', body: 'Rejected: reflowing before measuring hides the cause, so the record says "repaired" with no confirmed fault, and 350 °C on the receptacle melts the tongue. The CC path check already finds cracked joints. Diagnose first, then repair what failed.' },
        ],
      },
    ],
  },
]

// ---------------------------------------------------------------------------------------------
// Bench photos (drawn by demo-images.ts) and where they appear
// ---------------------------------------------------------------------------------------------

export const DEMO_IMAGES: Array<{ name: string, caption: string }> = [
  { name: 'vr240-q1-body-diode.jpg', caption: 'VR-240 rev C: red probe on Q1 source (BR1 −), black on the tab (drain)' },
  { name: 'vr240-bridge-pins.jpg', caption: 'VR-240: BR1 pins ~ ~ + − and the four forward probe pairs' },
  { name: 'pd400-fuse-f1.jpg', caption: 'PD-400: F1 (F2A 5×20 mm) in its clips beside TR1; measure it out of the clips' },
  { name: 'pd400-choke-l1.jpg', caption: 'PD-400: suppression choke L1, tie and adhesive at both ends' },
  { name: 'cc350-vcc-cap.jpg', caption: 'CC350-24: C4 (22 µF 50 V) beside U1; measure it out of circuit' },
  { name: 'cc350-startup-string.jpg', caption: 'CC350-24: start-up string R1 + R2 from C2+ to U1 pin 1' },
  { name: 'cv24-output-caps.jpg', caption: 'CV24-60: output capacitors C10 and C11, ESR at 100 kHz, each on its own' },
  { name: 'px10-relay-terminals.jpg', caption: 'PX-10: relay K1 at rest, probes on the L-in and L-out terminals' },
  { name: 'qc30-sr-fet.jpg', caption: 'QC30: synchronous rectifier Q2, red on S (GND pins), black on the drain pad' },
]

export const DEMO_STEP_IMAGES: Record<string, string[]> = {
  'vr240-stuck-at-full/q1_ds': ['vr240-q1-body-diode.jpg'],
  'vr240-stuck-at-full/bridge': ['vr240-bridge-pins.jpg'],
  'vr240-half-cycle-flicker/bridge_low': ['vr240-bridge-pins.jpg'],
  'pd400-dead-after-lamp-failure/fuse': ['pd400-fuse-f1.jpg'],
  'pd400-buzzes-low/choke': ['pd400-choke-l1.jpg'],
  'cc350-dead/vcc_cap': ['cc350-vcc-cap.jpg'],
  'cc350-dead/startup': ['cc350-startup-string.jpg'],
  'cv24-output-low/esr': ['cv24-output-caps.jpg'],
  'px10-stays-on/relay_rest': ['px10-relay-terminals.jpg'],
  'qc30-hiccup/sr_fet': ['qc30-sr-fet.jpg'],
}

// ---------------------------------------------------------------------------------------------
// How the invented repair records should fall, per published and active procedure. The shares
// differ from the authors' priors on purpose: the evidence is meant to move the ranking.
// ---------------------------------------------------------------------------------------------

export const DEMO_RECORD_PROFILE: Record<string, DemoRecordProfile> = {
  'vr240-stuck-at-full': {
    weight: 18,
    causes: { q1_short: 0.71, bridge_short: 0.12, pot_worn: 0.14, u1_gate_stuck: 0.03 },
    noFaultFound: 0.04,
    minutes: [25, 55],
    partsCostEur: [3, 9],
    replacementCostEur: 38,
    comebackRate: 0.06,
    notEconomicalRate: 0.05,
  },
  'vr240-half-cycle-flicker': {
    weight: 7,
    causes: { bridge_short: 0.78, load_lamp_fault: 0.22 },
    noFaultFound: 0.08,
    minutes: [30, 60],
    partsCostEur: [2, 6],
    replacementCostEur: 38,
    comebackRate: 0.09,
    notEconomicalRate: 0.04,
  },
  'vr240-half-cycle-flow': {
    weight: 14,
    causes: { switch_shorted: 0.3, bridge_shorted: 0.6, thermal_fuse_open: 0.1 },
    noFaultFound: 0.06,
    minutes: [20, 45],
    partsCostEur: [2, 9],
    replacementCostEur: 38,
    comebackRate: 0.05,
    notEconomicalRate: 0.04,
  },
  'vr240-glows-when-off': {
    weight: 6,
    causes: { load_below_min: 0.64, lamp_type: 0.23, q1_leaky: 0.08, snubber_wrong: 0.05 },
    noFaultFound: 0.1,
    minutes: [15, 40],
    partsCostEur: [0, 5],
    replacementCostEur: 38,
    comebackRate: 0.04,
    notEconomicalRate: 0.02,
  },
  'pd400-dead-after-lamp-failure': {
    weight: 14,
    causes: { fuse_open_lamp_arc: 0.58, triac_short: 0.3, switch_worn: 0.09, choke_open: 0.03 },
    noFaultFound: 0.03,
    minutes: [15, 45],
    partsCostEur: [1, 7],
    replacementCostEur: 32,
    comebackRate: 0.05,
    notEconomicalRate: 0.06,
  },
  'pd400-buzzes-low': {
    weight: 5,
    causes: { choke_loose: 0.38, led_load_mismatch: 0.36, lamp_filament: 0.21, triac_misfiring: 0.05 },
    noFaultFound: 0.12,
    minutes: [20, 50],
    partsCostEur: [0, 3],
    replacementCostEur: 32,
    comebackRate: 0.1,
    notEconomicalRate: 0.03,
  },
  'pd400-scorch-marks': {
    weight: 4,
    causes: { terminal_loose: 0.62, overload: 0.3, triac_degraded: 0.08 },
    noFaultFound: 0.02,
    minutes: [30, 70],
    partsCostEur: [2, 10],
    replacementCostEur: 32,
    comebackRate: 0.04,
    notEconomicalRate: 0.25,
  },
  'cc350-dead': {
    weight: 16,
    causes: { vcc_cap_dry: 0.46, primary_short_fuse: 0.27, startup_res_open: 0.22, output_diode_short: 0.05 },
    noFaultFound: 0.03,
    minutes: [20, 65],
    partsCostEur: [1, 8],
    replacementCostEur: 29,
    comebackRate: 0.07,
    notEconomicalRate: 0.12,
  },
  'cc350-flicker-when-dimmed': {
    weight: 8,
    causes: { output_cap_dry: 0.52, dimmer_min_low: 0.2, leading_edge_dimmer: 0.22, bridge_diode_open: 0.06 },
    noFaultFound: 0.09,
    minutes: [25, 55],
    partsCostEur: [1, 4],
    replacementCostEur: 29,
    comebackRate: 0.06,
    notEconomicalRate: 0.04,
  },
  'cv24-output-low': {
    weight: 9,
    causes: { output_caps_esr: 0.55, overload: 0.2, vadj_worn: 0.12, bulk_cap_low: 0.1, divider_drift: 0.03 },
    noFaultFound: 0.05,
    minutes: [30, 75],
    partsCostEur: [2, 12],
    replacementCostEur: 54,
    comebackRate: 0.05,
    notEconomicalRate: 0.06,
  },
  'cv24-trips-rcd': {
    weight: 6,
    causes: { moisture_tracking: 0.54, mov_short: 0.25, bridge_or_fet_short: 0.15, ycap_leak: 0.06 },
    noFaultFound: 0.06,
    minutes: [35, 90],
    partsCostEur: [1, 15],
    replacementCostEur: 54,
    comebackRate: 0.08,
    notEconomicalRate: 0.22,
  },
  'px10-stays-on': {
    weight: 12,
    causes: { relay_welded: 0.68, false_triggers: 0.2, timeout_pot: 0.07, relay_driver_short: 0.05 },
    noFaultFound: 0.07,
    minutes: [20, 50],
    partsCostEur: [3, 11],
    replacementCostEur: 46,
    comebackRate: 0.08,
    notEconomicalRate: 0.03,
  },
  'px10-no-detection': {
    weight: 10,
    causes: { dropper_cap_low: 0.5, lux_setting: 0.28, lens_dirty: 0.1, pir_sensor: 0.09, dropper_res_open: 0.03 },
    noFaultFound: 0.06,
    minutes: [15, 45],
    partsCostEur: [0, 9],
    replacementCostEur: 46,
    comebackRate: 0.05,
    notEconomicalRate: 0.04,
  },
  'qc30-hiccup': {
    weight: 11,
    causes: { output_cap_esr: 0.44, vcc_cap_dry: 0.33, receptacle_short: 0.15, sr_fet_short: 0.08 },
    noFaultFound: 0.04,
    minutes: [30, 70],
    partsCostEur: [1, 6],
    replacementCostEur: 27,
    comebackRate: 0.09,
    notEconomicalRate: 0.18,
  },
  'qc30-stays-at-5v': {
    weight: 7,
    causes: { cable_fault: 0.46, receptacle_cc_damaged: 0.4, pd_controller_fault: 0.14 },
    noFaultFound: 0.05,
    minutes: [10, 50],
    partsCostEur: [0, 5],
    replacementCostEur: 27,
    comebackRate: 0.06,
    notEconomicalRate: 0.2,
  },
}
