/**
 * A deterministic synthetic library of procedures for measuring the search engine: realistic
 * sizes and trade vocabulary, invented content. For benchmarks only, never shown to users.
 *
 * Labelled queries are correct by construction: each names a (symptom, device type) pair that
 * was planted on exactly one procedure and kept off every other one, so the relevant set is
 * that procedure alone, whatever else the generated text happens to say.
 */
import type { SearchDocument, SearchVocabulary, SymptomVocabularyEntry } from '../../server/services/search/types'
import { seededRandom } from '../../shared/utils/random'

export type LabelledQuery = { q: string, relevant: number[], kind: 'exact' | 'typo' | 'prefix' | 'synonym' }
export type SyntheticCorpus = { docs: SearchDocument[], vocabulary: SearchVocabulary, queries: LabelledQuery[] }

const DEVICE_TYPES: Array<[string, string]> = [
  ['leading-edge-dimmer', 'Leading-edge dimmer'],
  ['trailing-edge-dimmer', 'Trailing-edge dimmer'],
  ['touch-dimmer', 'Touch dimmer'],
  ['smart-dimmer', 'Smart Wi-Fi dimmer'],
  ['rotary-dimmer', 'Rotary dimmer'],
  ['constant-current-led-driver', 'Constant-current LED driver'],
  ['constant-voltage-led-driver', 'Constant-voltage LED driver'],
  ['dali-led-driver', 'DALI LED driver'],
  ['analogue-0-10v-driver', '0-10 V dimmable driver'],
  ['led-retrofit-lamp', 'LED retrofit lamp'],
  ['led-panel', 'LED panel'],
  ['led-strip-controller', 'LED strip controller'],
  ['halogen-transformer', 'Electronic halogen transformer'],
  ['fluorescent-ballast', 'Fluorescent ballast'],
  ['emergency-pack', 'Emergency lighting pack'],
  ['usb-c-charger', 'USB-C charger'],
  ['laptop-adapter', 'Laptop power adapter'],
  ['phone-charger', 'Phone charger'],
  ['power-tool-charger', 'Power tool charger'],
  ['ebike-charger', 'E-bike charger'],
  ['lead-acid-charger', 'Lead-acid battery charger'],
  ['atx-psu', 'ATX computer PSU'],
  ['open-frame-smps', 'Open-frame SMPS'],
  ['din-rail-psu', 'DIN-rail power supply'],
  ['bench-supply', 'Bench power supply'],
  ['wall-adapter', 'Plug-in wall adapter'],
  ['tv-power-board', 'TV power board'],
  ['monitor-psu', 'Monitor power supply'],
  ['fan-speed-controller', 'Fan speed controller'],
  ['audio-amp-psu', 'Audio amplifier PSU'],
]

/** What the unit does; combined with a condition to give 24 × 5 = 120 symptoms. */
const PHENOMENA: Array<{ slug: string, name: string, synonyms: [string, string] }> = [
  { slug: 'flickers', name: 'Flickers', synonyms: ['strobes', 'blinks rapidly'] },
  { slug: 'buzzes', name: 'Buzzes', synonyms: ['hums loudly', 'buzzing noise'] },
  { slug: 'whines', name: 'Whines', synonyms: ['high-pitched squeal', 'coil whine'] },
  { slug: 'no-output', name: 'No output', synonyms: ['output dead', 'nothing on the output'] },
  { slug: 'does-not-dim', name: 'Does not dim', synonyms: ['won\'t dim', 'stuck at full brightness'] },
  { slug: 'trips-breaker', name: 'Trips the breaker', synonyms: ['trips the RCD', 'kicks the breaker out'] },
  { slug: 'overheats', name: 'Overheats', synonyms: ['runs very hot', 'too hot to touch'] },
  { slug: 'blows-fuse', name: 'Blows the fuse', synonyms: ['pops the fuse', 'fuse goes open'] },
  { slug: 'pulses', name: 'Pulses on and off', synonyms: ['hiccups', 'cycles on and off'] },
  { slug: 'cuts-out', name: 'Cuts out', synonyms: ['shuts itself down', 'drops out'] },
  { slug: 'output-low', name: 'Output voltage low', synonyms: ['sagging output', 'undervoltage on the output'] },
  { slug: 'output-high', name: 'Output voltage high', synonyms: ['overvoltage on the output', 'output too high'] },
  { slug: 'ripple', name: 'Excess ripple', synonyms: ['noisy DC rail', 'AC on the DC output'] },
  { slug: 'ghosting', name: 'Glows when switched off', synonyms: ['ghost glow', 'faint glow when off'] },
  { slug: 'smells-burnt', name: 'Smells burnt', synonyms: ['burning smell', 'smoke smell'] },
  { slug: 'slow-start', name: 'Slow to start', synonyms: ['delayed start', 'takes seconds to come on'] },
  { slug: 'uneven-dimming', name: 'Dims unevenly', synonyms: ['jumpy dimming', 'steps while dimming'] },
  { slug: 'loses-brightness', name: 'Loses brightness', synonyms: ['fades over time', 'goes dull'] },
  { slug: 'clicks', name: 'Clicks repeatedly', synonyms: ['ticking sound', 'relay chatter'] },
  { slug: 'will-not-start', name: 'Will not turn on', synonyms: ['won\'t switch on', 'completely dead'] },
  { slug: 'stays-on', name: 'Will not turn off', synonyms: ['stuck on', 'won\'t switch off'] },
  { slug: 'arcs', name: 'Arcs or sparks', synonyms: ['sparking inside', 'arcing noise'] },
  { slug: 'erratic', name: 'Responds erratically', synonyms: ['random behaviour', 'ignores the control'] },
  { slug: 'not-charging', name: 'Does not charge', synonyms: ['won\'t charge', 'charging stops early'] },
]

const CONDITIONS: Array<{ slug: string, name: string, synonyms: [string, string] }> = [
  { slug: 'low-setting', name: 'at low setting', synonyms: ['when turned down', 'near minimum'] },
  { slug: 'full-load', name: 'at full load', synonyms: ['under heavy load', 'when fully loaded'] },
  { slug: 'cold-start', name: 'from cold', synonyms: ['on a cold start', 'first thing in the morning'] },
  { slug: 'when-warm', name: 'once warm', synonyms: ['after warming up', 'after an hour running'] },
  { slug: 'led-load', name: 'with LED lamps', synonyms: ['with LED bulbs', 'on retrofit LEDs'] },
]

const CAUSES = [
  'Dried-out electrolytic capacitor', 'High-ESR output capacitor', 'Shorted triac', 'Open thermal fuse', 'Failed optocoupler',
  'Cracked solder joint at the bridge rectifier', 'Leaky snubber capacitor', 'Shorted MOSFET', 'Open start-up resistor',
  'Burnt current-sense resistor', 'Drifting feedback divider', 'Failed TL431 reference', 'Worn potentiometer track',
  'Faulty zero-cross detector', 'Failed PWM controller IC', 'Open bleeder resistor', 'Degraded X2 capacitor',
  'Shorted Schottky output diode', 'Open winding on the flyback transformer', 'Failed NTC inrush thermistor',
  'Blown MOV across the input', 'Dry joint on the gate driver', 'Corroded connector pins', 'Overloaded output',
  'Incompatible LED lamps', 'Minimum load not met', 'Failed microcontroller supply regulator', 'Damaged common-mode choke',
  'Loose neutral connection', 'Overheated heatsink pad', 'Failed Y capacitor', 'Saturated output inductor',
  'Cracked ferrite core', 'Faulty relay contacts', 'Bad firmware configuration', 'Damaged touch sensor pad',
  'Failed bulk capacitor', 'Open fusible resistor', 'Weak auxiliary winding supply', 'Failed Hall sensor',
]

const STEPS = [
  'Check the input fuse', 'Measure the DC bus voltage', 'Test the bridge rectifier in diode mode', 'Measure ESR of the output capacitors',
  'Inspect for cracked solder joints', 'Check the triac gate drive', 'Discharge the bulk capacitor', 'Measure the auxiliary supply',
  'Test the MOSFET body diode', 'Check the optocoupler transfer', 'Measure the output ripple', 'Check the thermal fuse continuity',
  'Measure the start-up resistor', 'Scope the gate waveform', 'Check the feedback reference', 'Load test the output',
  'Inspect the snubber network', 'Measure the current-sense resistor', 'Check the zero-cross signal', 'Test with a resistive load',
  'Measure the firing angle', 'Check the MOV and X2 capacitor', 'Inspect the potentiometer track', 'Check the output diode',
  'Verify the minimum load', 'Check connector continuity', 'Measure standby current', 'Check the heatsink mounting',
]

const COMPONENTS = [
  'triac', 'MOSFET', 'bridge rectifier', 'electrolytic', 'bulk capacitor', 'thermal fuse', 'optocoupler', 'snubber', 'MOV',
  'X2 capacitor', 'Y capacitor', 'flyback transformer', 'Schottky diode', 'TL431', 'PWM controller', 'gate driver',
  'zero-cross detector', 'bleeder resistor', 'NTC thermistor', 'common-mode choke', 'heatsink', 'potentiometer',
  'microcontroller', 'relay', 'current-sense resistor', 'output inductor', 'feedback divider', 'start-up resistor',
  'auxiliary winding', 'fusible resistor', 'DIAC', 'output capacitor', 'IGBT', 'bootstrap capacitor', 'Zener diode',
  'linear regulator', 'buck converter', 'boost inductor', 'PFC stage', 'PFC choke', 'rectifier diode', 'fast recovery diode',
  'ceramic capacitor', 'film capacitor', 'tantalum capacitor', 'shunt regulator', 'error amplifier', 'soft-start capacitor',
  'timing capacitor', 'gate resistor', 'RC dropper', 'dropper capacitor', 'crystal', 'EEPROM', 'touch controller',
  'capacitive sense pad', 'reed switch', 'rotary encoder', 'push switch', 'terminal block', 'ribbon cable', 'JST connector',
  'spade terminal', 'mains inlet', 'IEC connector', 'DC barrel jack', 'USB-C receptacle', 'PD controller', 'synchronous rectifier',
  'primary clamp', 'RCD clamp', 'TVS diode', 'varistor', 'inrush limiter', 'hold-up capacitor', 'sense winding', 'LED string',
  'LED module', 'current mirror', 'dimming interface', 'DALI transceiver', 'opamp', 'comparator', 'watchdog', 'fan', 'thermal pad',
]
const PART_PREFIXES = ['BT', 'BTA', 'BTB', 'IRF', 'STP', 'STF', 'TNY', 'TOP', 'LNK', 'UC', 'NCP', 'FAN', 'LM', 'TL', 'MOC', 'PC', 'EL', '1N', 'UF', 'MUR', 'SB', 'KBP', 'GBU', 'DB', 'ICE', 'VIPer', 'L', 'MP', 'SY', 'OB', 'LD', 'HV', 'BP', 'PN', 'AP', 'RT', 'SD', 'IR', 'FQP', 'AOD']
const REF_LETTERS = ['R', 'C', 'D', 'Q', 'U', 'L', 'T', 'F', 'ZD', 'VR', 'RV', 'CN', 'JP', 'TH', 'K']
const TOOLS = ['multimeter', 'ESR meter', 'oscilloscope with a differential probe', 'isolating transformer', 'variac', 'dummy load', 'thermal camera', 'LCR meter', 'bench supply with current limit', 'clamp meter', 'insulation tester', 'hot-air station', 'magnifier', 'peak-hold meter', 'signal generator', 'electronic load', 'current probe', 'logic analyser', 'component tester', 'power analyser']
const PLACES = ['near the input connector', 'beside the heatsink', 'under the transformer', 'on the secondary side', 'by the control IC', 'at the output terminals', 'close to the triac', 'on the underside of the board', 'behind the potting', 'under the label', 'along the creepage slot', 'next to the fuse holder', 'around the mounting screw', 'at the board edge', 'under the shield can', 'beneath the glue', 'inside the enclosure lid', 'at the cable entry']
const VERBS = ['inspect', 'measure', 'probe', 'replace', 'reflow', 'desolder', 'lift', 'bridge', 'clean', 'scope', 'log', 'compare', 'swap', 'retest', 'photograph', 'mark', 'trace', 'isolate', 'power up', 'load', 'soak test', 'tap', 'flex', 'heat', 'cool']
const ADJECTIVES = ['swollen', 'cracked', 'discoloured', 'leaky', 'bulging', 'charred', 'corroded', 'loose', 'intermittent', 'drifting', 'noisy', 'warm', 'brittle', 'dull', 'crusty', 'pitted', 'lifted', 'scorched', 'delaminated', 'weak']
const UNITS = ['V', 'mV', 'A', 'mA', 'µA', 'ohm', 'kΩ', 'MΩ', 'µF', 'nF', 'pF', 'mH', 'µH', 'Hz', 'kHz', 'W', '°C', 'ms', 'µs', '%']
/** Symptom words that also turn up in ordinary procedure text: realistic distraction. */
const LOOSE_SYMPTOM_WORDS = ['flicker', 'buzz', 'hum', 'whine', 'dropout', 'glow', 'overheating', 'ripple', 'clicking', 'fading', 'sparking', 'dimming', 'hiccup', 'squeal', 'smell', 'tripping', 'strobing', 'chatter', 'sag', 'overshoot']

const SENTENCES = [
  'Measure across the {c} with the {t} and expect about {v}.',
  'With the unit unplugged, discharge the {c} through a resistor and confirm with a meter before touching anything.',
  'A {w} that comes and goes usually points to the {c} rather than the {c2}.',
  'Look for {a} board {p}; a cooked {c} leaves a brown ring.',
  'Compare the reading with a known-good unit; a difference of more than ten percent is suspect.',
  'If {ref} reads short both ways, lift one leg and measure again to rule out a parallel path.',
  'Power the board from the {t} and watch the {c} while the load changes.',
  'The {c} ({ref}) sits {p} and is easy to miss under the conformal coating.',
  'Replace the {c} with a part of equal or higher rating, observing polarity; {part} is a common fit.',
  'Check the {c2} at the same time, since it shares the same stress.',
  'Reflow every joint {p}; vibration and heat cycling crack them over the years.',
  'Scope the signal at {ref} with a differential probe; never float the oscilloscope.',
  'Expect {v} at the {c} under normal load; much less suggests the {c2} is failing.',
  'A faint {w} at low load is normal for this design and is not a fault on its own.',
  'Note the date code of {part} and record the reading in the repair log.',
  'Work on an isolating transformer with an RCD upstream; an RCD will not trip on a line-to-neutral contact.',
  'The {c} often fails together with the {c2}, so test both before ordering parts.',
  'Heat-sink the lead with pliers when soldering the {c}; many are non-resettable.',
  'Run the unit for twenty minutes on the {t} and recheck the temperature of the {c}.',
  'If the {w} returns after the repair, suspect the {c2} next.',
  'Follow local electrical codes; fixed-wiring work may need a licensed electrician.',
  'Verify the output stays within {v} of nominal across the whole range.',
  '{V} the {c} {p} and {v2} the {c2} before going further.',
  'On boards marked {model}, {ref} is a {part} and {ref2} feeds the {c}.',
  'A {a} {c} is the usual culprit on {model} units from this batch.',
  'Tap the board gently with an insulated tool while watching for {w}; a {a} joint shows itself this way.',
  'The datasheet of {part} gives {v} as the limit, so anything above that needs a closer look.',
  'Swap {ref} for a {part} if the original is obsolete; check pinout before fitting.',
  'Some revisions of {model} fit a {part} at {ref}; others use a {part2}.',
  'Freeze spray on the {c} makes an intermittent {w} appear or disappear within seconds.',
  'Check the creepage around {ref}; carbon tracking {p} can conduct at mains voltage.',
  'Measure the resistance of {ref} out of circuit; a reading far from the marked value condemns it.',
  'Use the {t} to confirm the {c} switches cleanly at {v}.',
  'If the {c} is potted, cut the compound carefully {p} and keep the shavings away from the board.',
  'Look up the service note for {model}; it lists {ref} and {ref2} as known weak spots.',
  'A {a} smell near the {c} usually means it has run hot for a long time.',
  'Inject {v} from the {t} at {ref} and follow the signal towards the {c2}.',
  'After fitting a new {c}, run a soak test for an hour at full load and log the case temperature.',
  'Keep one hand behind your back when probing the primary side with power applied.',
  'Do not trust the bleeder: discharge the bulk capacitor through a resistor and verify with a meter.',
  'Photograph the board before and after the repair and attach the photos to the record.',
  'The {c} on {model} is glued down; soften the glue with heat before lifting it.',
  'If the customer reports {w} only with certain lamps, ask for the lamp model and try the same one on the bench.',
  'Record which part actually fixed it; parts swapped on a hunch do not count as evidence.',
  'A reading of {v} at {ref} with no load and {v2} with load points to a {a} {c}.',
  'Clean flux residue {p} with isopropyl alcohol; it can leak enough to upset the {c2}.',
  'Check that the {c} is the right type: a {part} will not survive where a {part2} is specified.',
  'Where the {c} has a {a} case, replace it even if it measures correctly today.',
  'Hold the {t} probe on {ref} while the unit warms; a slow drift is the sign to look for.',
  'The {c2} shares a ground return with the {c}; a {a} joint there affects both.',
]

function fill(template: string, rnd: () => number): string {
  const pick = <T>(a: readonly T[]): T => a[Math.floor(rnd() * a.length)]!
  const int = (lo: number, hi: number): number => lo + Math.floor(rnd() * (hi - lo + 1))
  const c = pick(COMPONENTS)
  let c2 = pick(COMPONENTS)
  if (c2 === c) c2 = COMPONENTS[(COMPONENTS.indexOf(c) + 1) % COMPONENTS.length]!
  const part = (): string => `${pick(PART_PREFIXES)}${int(10, 9999)}${rnd() < 0.3 ? pick(['A', 'B', 'G', 'N', 'P', 'S']) : ''}`
  const ref = (): string => `${pick(REF_LETTERS)}${int(1, 250)}`
  const value = (): string => `${rnd() < 0.3 ? (int(1, 99) / 10).toFixed(1) : int(1, 400)} ${pick(UNITS)}`
  const verb = pick(VERBS)
  return template
    .replaceAll('{c2}', c2)
    .replaceAll('{c}', c)
    .replaceAll('{t}', pick(TOOLS))
    .replaceAll('{p}', pick(PLACES))
    .replaceAll('{v2}', value())
    .replaceAll('{v}', value())
    .replaceAll('{w}', pick(LOOSE_SYMPTOM_WORDS))
    .replaceAll('{a}', pick(ADJECTIVES))
    .replaceAll('{part2}', part())
    .replaceAll('{part}', part())
    .replaceAll('{ref2}', ref())
    .replaceAll('{ref}', ref())
    .replaceAll('{model}', `${pick(['LD', 'TR', 'PX', 'SM', 'CV', 'DR', 'KX', 'ZB'])}-${int(100, 9999)}`)
    .replaceAll('{V}', verb[0]!.toUpperCase() + verb.slice(1))
}

function buildSymptoms(): SymptomVocabularyEntry[] {
  const out: SymptomVocabularyEntry[] = []
  for (const p of PHENOMENA) {
    for (const c of CONDITIONS) {
      out.push({
        slug: `${p.slug}-${c.slug}`,
        name: `${p.name} ${c.name}`,
        synonyms: [`${p.synonyms[0]} ${c.synonyms[0]}`, `${p.synonyms[1]} ${c.synonyms[1]}`, `${p.synonyms[0]} ${c.synonyms[1]}`],
      })
    }
  }
  return out
}

function typo(word: string, rnd: () => number): string {
  const i = 1 + Math.floor(rnd() * (word.length - 2))
  const kind = Math.floor(rnd() * 4)
  if (kind === 0) return word.slice(0, i) + word.slice(i + 1) // dropped letter
  if (kind === 1) return word.slice(0, i) + word[i + 1] + word[i] + word.slice(i + 2) // swapped neighbours
  if (kind === 2) return word.slice(0, i) + word[i] + word.slice(i) // doubled letter
  const letters = 'abcdefghijklmnopqrstuvwxyz'
  let sub = letters[Math.floor(rnd() * 26)]!
  if (sub === word[i]) sub = sub === 'z' ? 'a' : letters[letters.indexOf(sub) + 1]!
  return word.slice(0, i) + sub + word.slice(i + 1) // wrong letter
}

/**
 * `n` procedures over 30 device types and 120 symptoms, and up to 300 labelled queries
 * (a quarter of each kind). Same `n` and `seed`, same corpus.
 */
export function generateCorpus(n: number, seed: number): SyntheticCorpus {
  const rnd = seededRandom(seed)
  const int = (lo: number, hi: number): number => lo + Math.floor(rnd() * (hi - lo + 1))
  const pick = <T>(a: readonly T[]): T => a[Math.floor(rnd() * a.length)]!
  const sample = <T>(a: readonly T[], k: number): T[] => {
    const copy = [...a]
    for (let i = copy.length - 1; i > 0; i--) {
      const j = Math.floor(rnd() * (i + 1))
      ;[copy[i], copy[j]] = [copy[j]!, copy[i]!]
    }
    return copy.slice(0, k)
  }

  const symptoms = buildSymptoms()
  const deviceTypes = DEVICE_TYPES.map(([slug, name]) => ({ slug, name }))
  const vocabulary: SearchVocabulary = { symptoms, deviceTypes }

  // Plant (symptom, device) pairs, each on one procedure only.
  const plantCount = Math.min(300, Math.floor(n / 4))
  const planted = new Map<string, number>() // "symptom|device" → doc index
  const plantOf = new Map<number, { symptom: SymptomVocabularyEntry, device: { slug: string, name: string } }>()
  const plantIndices = sample(
    Array.from({ length: n }, (_, i) => i),
    plantCount,
  )
  for (const docIndex of plantIndices) {
    let symptom: SymptomVocabularyEntry
    let device: { slug: string, name: string }
    do {
      symptom = pick(symptoms)
      device = pick(deviceTypes)
    } while (planted.has(`${symptom.slug}|${device.slug}`))
    planted.set(`${symptom.slug}|${device.slug}`, docIndex)
    plantOf.set(docIndex, { symptom, device })
  }

  const hazardSets = [['mains', 'stored_energy'], ['mains'], ['stored_energy'], ['heat'], ['mains', 'heat'], ['none']]
  const startDay = Date.UTC(2024, 0, 1)
  const docs: SearchDocument[] = []
  for (let i = 0; i < n; i++) {
    const plant = plantOf.get(i)
    const device = plant?.device ?? pick(deviceTypes)
    const chosen: SymptomVocabularyEntry[] = plant ? [plant.symptom] : []
    const want = int(1, 3)
    for (let tries = 0; chosen.length < want && tries < 20; tries++) {
      const s = pick(symptoms)
      if (chosen.includes(s) || planted.has(`${s.slug}|${device.slug}`)) continue
      chosen.push(s)
    }
    const primary = chosen[0]!
    const causeNames = sample(CAUSES, int(2, 5))
    const stepTitles = sample(STEPS, int(3, 8))
    const titleTemplates = [
      `${device.name}: ${primary.name.toLowerCase()}`,
      `${primary.name} on a ${device.name.toLowerCase()}`,
      `Fault-finding: ${device.name.toLowerCase()}, ${primary.name.toLowerCase()}`,
      `${device.name} ${primary.name.toLowerCase()}`,
    ]

    const paragraphs: string[] = [
      `When a ${device.name.toLowerCase()} ${primary.name.toLowerCase()}, start with the cheapest checks and work inwards.`,
    ]
    for (const c of causeNames) paragraphs.push(`${c}: ${fill(pick(SENTENCES), rnd)}`)
    for (const s of stepTitles) paragraphs.push(`${s}. ${fill(pick(SENTENCES), rnd)} ${fill(pick(SENTENCES), rnd)}`)
    const target = int(200, 400)
    let words = paragraphs.join(' ').split(/\s+/).length
    while (words < target) {
      const s = fill(pick(SENTENCES), rnd)
      paragraphs.push(s)
      words += s.split(/\s+/).length
    }

    docs.push({
      id: i + 1,
      slug: `${device.slug}-${primary.slug}-${i + 1}`,
      title: pick(titleTemplates),
      deviceType: { ...device },
      symptoms: chosen.map(s => ({ slug: s.slug, name: s.name })),
      hazards: [...pick(hazardSets)],
      causes: causeNames.map((name, k) => ({ key: `c${k + 1}`, name })),
      stepTitles,
      text: paragraphs.join('\n'),
      publishedAt: new Date(startDay + int(0, 900) * 86_400_000).toISOString(),
    })
  }

  const kinds: LabelledQuery['kind'][] = ['exact', 'typo', 'prefix', 'synonym']
  const queries: LabelledQuery[] = []
  let k = 0
  for (const [key, docIndex] of planted) {
    const [symptomSlug, deviceSlug] = key.split('|') as [string, string]
    const symptom = symptoms.find(s => s.slug === symptomSlug)!
    const device = deviceTypes.find(d => d.slug === deviceSlug)!
    // By construction only the planted doc carries this pair; computed, not assumed.
    const relevant = docs.filter(d => d.deviceType.slug === deviceSlug && d.symptoms.some(s => s.slug === symptomSlug)).map(d => d.id)
    if (relevant.length !== 1 || relevant[0] !== docIndex + 1) throw new Error(`corpus: planted pair ${key} is not unique`)
    const kind = kinds[k++ % kinds.length]!
    const symptomFirst = rnd() < 0.5
    const join = (a: string, b: string): string => (symptomFirst ? `${a} ${b}` : `${b} ${a}`)
    let q: string
    if (kind === 'exact') {
      q = join(symptom.name, device.name)
    }
    else if (kind === 'synonym') {
      q = join(pick(symptom.synonyms), device.name)
    }
    else if (kind === 'typo') {
      // One slip in one word long enough for typo tolerance to apply (over 4 letters).
      const plain = join(symptom.name, device.name)
      const words = [...plain.matchAll(/[A-Za-z]{5,}/g)]
      const m = pick(words.length ? words : [...plain.matchAll(/[A-Za-z]{4,}/g)])
      q = plain.slice(0, m.index) + typo(m[0], rnd) + plain.slice(m.index + m[0].length)
    }
    else {
      const parts = join(symptom.name, device.name).split(' ')
      const last = parts[parts.length - 1]!
      parts[parts.length - 1] = last.length > 3 ? last.slice(0, int(3, last.length - 1)) : last
      q = parts.join(' ')
    }
    queries.push({ q: rnd() < 0.5 ? q.toLowerCase() : q, relevant, kind })
  }
  return { docs, vocabulary, queries }
}
