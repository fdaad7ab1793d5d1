import sharp from 'sharp'
import { describe, expect, it } from 'vitest'
import { RevisionContent } from '#shared/types/procedure'
import type { RevisionContent as ParsedContent } from '#shared/types/procedure'
import { expectedWindow, evaluateReading } from '#shared/utils/readings'
import { isPassingVerdict, verdictCauses, verdictsOf } from '#shared/types/verdicts'
import { causeProbabilities, followFlow, isFlow, judgeCheck, validateFlow } from '#shared/utils/diagnosis'
import { DIMMER_CAUSES, DIMMER_STEPS } from './fixtures/two-wire-dimmer-flow'
import {
  DEMO_DEVICE_TYPES,
  DEMO_IMAGES,
  DEMO_PEOPLE,
  DEMO_PROCEDURES,
  DEMO_RECORD_PROFILE,
  DEMO_STEP_IMAGES,
  DEMO_SYMPTOMS,
} from '~~/scripts/seed/demo-content'
import type { DemoProcedure, DemoRevision } from '~~/scripts/seed/demo-content'
import { DEMO_IMAGE_HEIGHT, DEMO_IMAGE_WIDTH, renderDemoImage } from '~~/scripts/seed/demo-images'
import { demoSteps, demoVerdicts, readingFor } from '~~/scripts/seed/record-readings'
import { seededRandom } from '#shared/utils/random'

const DECIDED = new Set(['published', 'superseded', 'rejected', 'changes_requested'])
const ALL_REVISIONS = DEMO_PROCEDURES.flatMap(p => p.revisions.map((r, i) => ({ procedure: p, revision: r, index: i })))

function parsed(revision: DemoRevision): ParsedContent {
  return RevisionContent.parse(revision.content)
}

function published(procedure: DemoProcedure): DemoRevision | undefined {
  return procedure.revisions.find(r => r.state === 'published')
}

/** The revision a reader sees: the published one, else the newest. */
function current(procedure: DemoProcedure): DemoRevision {
  return published(procedure) ?? procedure.revisions[procedure.revisions.length - 1]!
}

function procedureBySlug(slug: string): DemoProcedure {
  const found = DEMO_PROCEDURES.find(p => p.slug === slug)
  if (!found) throw new Error(`no procedure ${slug}`)
  return found
}

function stepOf(slug: string, key: string) {
  const step = parsed(current(procedureBySlug(slug))).steps.find(s => s.key === key)
  if (!step) throw new Error(`no step ${slug}/${key}`)
  return step
}

function allText(c: ParsedContent): string {
  return [c.summary, c.fix, c.verification, ...c.steps.map(s => s.instruction), ...c.causes.map(x => x.detail)].join('\n')
}

describe('demo vocabularies and people', () => {
  it('has at least 5 device types and 12 symptoms with unique slugs', () => {
    expect(DEMO_DEVICE_TYPES.length).toBeGreaterThanOrEqual(5)
    expect(DEMO_SYMPTOMS.length).toBeGreaterThanOrEqual(12)
    expect(new Set(DEMO_DEVICE_TYPES.map(d => d.slug)).size).toBe(DEMO_DEVICE_TYPES.length)
    expect(new Set(DEMO_SYMPTOMS.map(s => s.slug)).size).toBe(DEMO_SYMPTOMS.length)
  })

  it('gives every symptom synonyms, and no synonym belongs to two symptoms', () => {
    const seen = new Map<string, string>()
    for (const symptom of DEMO_SYMPTOMS) {
      expect(symptom.synonyms.length, symptom.slug).toBeGreaterThanOrEqual(3)
      for (const word of [symptom.name, ...symptom.synonyms].map(w => w.toLowerCase())) {
        expect(seen.get(word) ?? symptom.slug, `"${word}"`).toBe(symptom.slug)
        seen.set(word, symptom.slug)
      }
    }
  })

  it('has the five demo accounts with their roles', () => {
    expect(DEMO_PEOPLE.sam).toMatchObject({ email: 'admin@harbourlane.example', role: 'admin' })
    expect(DEMO_PEOPLE.priya).toMatchObject({ email: 'editor@harbourlane.example', role: 'editor' })
    expect(DEMO_PEOPLE.tomasz).toMatchObject({ email: 'author@harbourlane.example', role: 'author' })
    expect(DEMO_PEOPLE.ade).toMatchObject({ email: 'tech@harbourlane.example', role: 'technician' })
    expect(DEMO_PEOPLE.mika).toMatchObject({ email: 'mika@harbourlane.example', role: 'technician' })
  })
})

describe('demo revisions', () => {
  it.each(ALL_REVISIONS.map(x => [`${x.procedure.slug} #${x.index + 1} (${x.revision.state})`, x.revision] as const))('%s passes RevisionContent', (_label, revision) => {
    const result = RevisionContent.safeParse(revision.content)
    expect(result.success, result.success ? '' : JSON.stringify(result.error.issues)).toBe(true)
  })

  it('uses only device types and symptoms from the vocabularies', () => {
    const deviceTypes = new Set(DEMO_DEVICE_TYPES.map(d => d.slug))
    const symptoms = new Set(DEMO_SYMPTOMS.map(s => s.slug))
    for (const { procedure, revision } of ALL_REVISIONS) {
      const c = parsed(revision)
      expect(deviceTypes.has(c.deviceType), `${procedure.slug}: ${c.deviceType}`).toBe(true)
      for (const s of c.symptoms) expect(symptoms.has(s), `${procedure.slug}: ${s}`).toBe(true)
    }
  })

  it('covers at least 14 procedures, 4 device types and 10 symptoms', () => {
    expect(DEMO_PROCEDURES.length).toBeGreaterThanOrEqual(14)
    expect(new Set(DEMO_PROCEDURES.map(p => p.slug)).size).toBe(DEMO_PROCEDURES.length)
    const current_ = DEMO_PROCEDURES.map(p => parsed(current(p)))
    expect(new Set(current_.map(c => c.deviceType)).size).toBeGreaterThanOrEqual(4)
    expect(new Set(current_.flatMap(c => c.symptoms)).size).toBeGreaterThanOrEqual(10)
  })

  it('keeps each revision to 2–5 causes and 3–8 steps, priors summing to 1, and every cause reachable from a step', () => {
    for (const { procedure, revision, index } of ALL_REVISIONS) {
      const c = parsed(revision)
      const label = `${procedure.slug} #${index + 1}`
      expect(c.causes.length, label).toBeGreaterThanOrEqual(2)
      expect(c.causes.length, label).toBeLessThanOrEqual(5)
      expect(c.steps.length, label).toBeGreaterThanOrEqual(3)
      expect(c.steps.length, label).toBeLessThanOrEqual(8)
      expect(c.causes.reduce((sum, x) => sum + x.prior, 0), label).toBeCloseTo(1, 9)
      const raised = new Set(c.steps.flatMap(s => Object.values(verdictsOf(s)).flatMap(m => m.causes)))
      for (const cause of c.causes) expect(raised.has(cause.key), `${label}: ${cause.key}`).toBe(true)
    }
  })

  it('holds four-eyes: decided revisions have a reviewer who may review and is not the author', () => {
    for (const { procedure, revision, index } of ALL_REVISIONS) {
      const label = `${procedure.slug} #${index + 1}`
      expect(['author', 'editor', 'admin'], label).toContain(DEMO_PEOPLE[revision.author].role)
      if (DECIDED.has(revision.state)) {
        expect(revision.reviewer, label).toBeDefined()
        expect(revision.reviewer, label).not.toBe(revision.author)
        expect(['editor', 'admin'], label).toContain(DEMO_PEOPLE[revision.reviewer!].role)
      }
      else {
        expect(revision.reviewer, label).toBeUndefined()
      }
    }
  })

  it('keeps histories in order: oldest first, one published at most, superseded before it, decisions in the past', () => {
    for (const procedure of DEMO_PROCEDURES) {
      const r = procedure.revisions
      for (let i = 1; i < r.length; i++) expect(r[i]!.daysAgo, procedure.slug).toBeLessThan(r[i - 1]!.daysAgo)
      expect(r.filter(x => x.state === 'published').length, procedure.slug).toBeLessThanOrEqual(1)
      const pub = r.findIndex(x => x.state === 'published')
      r.forEach((x, i) => {
        if (x.state === 'superseded') expect(i, procedure.slug).toBeLessThan(pub)
        if (pub >= 0 && i > pub) expect(['in_review', 'changes_requested', 'rejected', 'draft'], procedure.slug).toContain(x.state)
        if (DECIDED.has(x.state)) expect(x.daysAgo, procedure.slug).toBeGreaterThanOrEqual(2)
        expect(x.changeNote.length, procedure.slug).toBeGreaterThan(10)
      })
    }
  })

  it('changes something real between consecutive revisions', () => {
    for (const procedure of DEMO_PROCEDURES) {
      for (let i = 1; i < procedure.revisions.length; i++) {
        expect(parsed(procedure.revisions[i]!), `${procedure.slug} #${i + 1}`).not.toEqual(parsed(procedure.revisions[i - 1]!))
      }
    }
  })

  it('anchors comments to steps of their own revision', () => {
    for (const { procedure, revision } of ALL_REVISIONS) {
      const keys = new Set(parsed(revision).steps.map(s => s.key))
      for (const comment of revision.comments ?? []) {
        expect(DEMO_PEOPLE[comment.by], procedure.slug).toBeDefined()
        if (comment.stepKey) expect(keys.has(comment.stepKey), `${procedure.slug}: ${comment.stepKey}`).toBe(true)
      }
    }
  })

  it('plays out every state the scenario needs', () => {
    const states = (p: DemoProcedure) => p.revisions.map(r => r.state)
    // 3+ revisions: published on top of superseded ones
    expect(DEMO_PROCEDURES.some(p => p.revisions.length >= 3 && states(p).at(-1) === 'published' && states(p).slice(0, -1).every(s => s === 'superseded'))).toBe(true)
    // in review on top of a published revision
    expect(DEMO_PROCEDURES.some(p => states(p).includes('published') && states(p).at(-1) === 'in_review')).toBe(true)
    // changes requested, with editor comments anchored to steps
    const changes = ALL_REVISIONS.filter(x => x.revision.state === 'changes_requested')
    expect(changes.length).toBeGreaterThanOrEqual(1)
    expect(changes.some(x => (x.revision.comments ?? []).some(c => c.stepKey && ['editor', 'admin'].includes(DEMO_PEOPLE[c.by].role)))).toBe(true)
    // rejected somewhere
    expect(ALL_REVISIONS.some(x => x.revision.state === 'rejected')).toBe(true)
    // retired, its published revision kept
    expect(DEMO_PROCEDURES.some(p => p.retired && states(p).includes('published'))).toBe(true)
    // only revision in review: nothing published yet
    expect(DEMO_PROCEDURES.some(p => p.revisions.length === 1 && states(p)[0] === 'in_review')).toBe(true)
  })
})

describe('demo step images', () => {
  it('refers only to known images and to steps that exist', () => {
    const names = new Set(DEMO_IMAGES.map(i => i.name))
    expect(names.size).toBe(DEMO_IMAGES.length)
    for (const [where, images] of Object.entries(DEMO_STEP_IMAGES)) {
      const [slug, key] = where.split('/')
      expect(() => stepOf(slug!, key!), where).not.toThrow()
      for (const image of images) expect(names.has(image), `${where}: ${image}`).toBe(true)
    }
  })

  it('places at least 6 images over at least 4 procedures, each image used', () => {
    const used = new Set(Object.values(DEMO_STEP_IMAGES).flat())
    expect(used.size).toBeGreaterThanOrEqual(6)
    expect(new Set(Object.keys(DEMO_STEP_IMAGES).map(k => k.split('/')[0])).size).toBeGreaterThanOrEqual(4)
    for (const image of DEMO_IMAGES) expect(used.has(image.name), image.name).toBe(true)
  })
})

describe('demo readings against trade facts', () => {
  const currentSteps = DEMO_PROCEDURES.flatMap(p => parsed(current(p)).steps.map(s => ({ slug: p.slug, step: s })))
  const diodeSteps = currentSteps.filter(x => x.step.measurement?.quantity === 'diode_drop')

  it('keeps every diode-test window inside the silicon rule of thumb and fails a shorted junction', () => {
    // Meter manuals: a good silicon junction reads 0.40–0.90 V; a shorted one under 0.050 V
    // (a common beep threshold) both ways; an open one OL (common practice).
    expect(diodeSteps.length).toBeGreaterThanOrEqual(8)
    for (const { slug, step } of diodeSteps) {
      const { min, max } = expectedWindow(step.measurement!)
      expect(min, `${slug}/${step.key}`).toBeGreaterThanOrEqual(0.4)
      expect(max, `${slug}/${step.key}`).toBeLessThanOrEqual(0.9)
      // A shorted junction reads low; the step names a cause for a short (low) or an open junction (OL).
      const shorted = evaluateReading('0.012 V', step.measurement!)
      expect(shorted.ok && shorted.verdict === 'low', `${slug}/${step.key}`).toBe(true)
      expect([...verdictCauses(step, 'low'), ...verdictCauses(step, 'open')].length, `${slug}/${step.key}`).toBeGreaterThan(0)
      const open = evaluateReading('OL', step.measurement!)
      expect(open.ok && !open.pass, `${slug}/${step.key}`).toBe(true)
      // 0.55 V: a good junction, and a typical MOSFET body diode (0.4–0.7 V, common practice).
      const good = evaluateReading('0.55', step.measurement!)
      expect(good.ok && good.pass, `${slug}/${step.key}`).toBe(true)
    }
  })

  it('uses 0.40–0.70 V for every MOSFET body-diode step', () => {
    // N-channel MOSFET body diode, red on S, black on D: 0.4–0.7 V (common practice).
    const bodyDiode = diodeSteps.filter(x => /red on \*\*S\*\*/i.test(x.step.instruction))
    expect(bodyDiode.length).toBeGreaterThanOrEqual(4)
    for (const { slug, step } of bodyDiode) expect(expectedWindow(step.measurement!), `${slug}/${step.key}`).toEqual({ min: 0.4, max: 0.7 })
  })

  it('passes OL only where an open part is the good answer', () => {
    // A welded relay contact, a shorted TRIAC or a failed varistor conducts; a healthy one reads
    // open (common practice).
    const relay = stepOf('px10-stays-on', 'relay_rest')
    expect(evaluateReading('OL', relay.measurement!)).toMatchObject({ ok: true, pass: true })
    expect(evaluateReading('0.3 Ω', relay.measurement!)).toMatchObject({ ok: true, pass: false, verdict: 'low' })
    expect(verdictCauses(relay, 'low')).toEqual(['relay_welded'])
    const triac = stepOf('pd400-dead-after-lamp-failure', 'triac')
    expect(evaluateReading('OL', triac.measurement!)).toMatchObject({ pass: true })
    expect(evaluateReading('4R7', triac.measurement!)).toMatchObject({ pass: false, verdict: 'low' })
    expect(verdictCauses(triac, 'low')).toEqual(['triac_short'])
    // Thermal and glass fuses: continuity when intact, OL when blown (common practice).
    const fuse = stepOf('pd400-dead-after-lamp-failure', 'fuse')
    expect(evaluateReading('OL', fuse.measurement!)).toMatchObject({ pass: false, verdict: 'open' })
    expect(verdictCauses(fuse, 'open')).toEqual(['fuse_open_lamp_arc', 'triac_short'])
    expect(evaluateReading('0.1 Ω', fuse.measurement!)).toMatchObject({ pass: true })
    const tf1 = stepOf('vr240-half-cycle-flow', 'fuse')
    expect(evaluateReading('OL', tf1.measurement!)).toMatchObject({ pass: false, verdict: 'open' })
    expect(verdictCauses(tf1, 'open')).toEqual(['thermal_fuse_open'])
    const openSteps = currentSteps.filter(x => x.step.measurement?.openExpected)
    expect(openSteps.length).toBeLessThanOrEqual(currentSteps.length / 10)
  })

  it('checks the bench supply at 49.5–50.5 Hz', () => {
    // EN 50160: 50 Hz ±1 % for 99.5 % of a year on interconnected systems (from memory; the
    // same window is common practice for a bench supply check).
    const step = stepOf('cc350-flicker-when-dimmed', 'bench_supply')
    expect(expectedWindow(step.measurement!)).toEqual({ min: 49.5, max: 50.5 })
    expect(evaluateReading('50.02 Hz', step.measurement!).ok && evaluateReading('50.02 Hz', step.measurement!)).toMatchObject({ pass: true })
  })

  it('reads the resistor colour bands and SMD codes the steps quote as the values they expect', () => {
    // IEC 60062 colour code: yellow-violet-red-gold = 4.7 kΩ ±5 %; brown-black-green-gold = 1 MΩ ±5 %.
    const digit: Record<string, number> = { black: 0, brown: 1, red: 2, orange: 3, yellow: 4, green: 5, blue: 6, violet: 7, grey: 8, white: 9 }
    const tolerance: Record<string, number> = { gold: 5, silver: 10 }
    let checked = 0
    const everyStep = ALL_REVISIONS.flatMap(x => parsed(x.revision).steps.map(step => ({ slug: x.procedure.slug, step })))
    for (const { slug, step } of everyStep) {
      const bands = /\*\*(\w+)-(\w+)-(\w+)-(\w+)\*\*/.exec(step.instruction)
      if (!bands || step.measurement?.quantity !== 'resistance') continue
      const [, a, b, m, t] = bands
      const ohms = (digit[a!]! * 10 + digit[b!]!) * 10 ** digit[m!]!
      const { min, max } = expectedWindow(step.measurement)
      expect(min, `${slug}/${step.key}`).toBeCloseTo(ohms * (1 - tolerance[t!]! / 100), 6)
      expect(max, `${slug}/${step.key}`).toBeCloseTo(ohms * (1 + tolerance[t!]! / 100), 6)
      checked++
    }
    expect(checked).toBeGreaterThanOrEqual(2)
    // Three-digit capacitor code in pF (103 = 10 nF, 684 = 0.68 µF) and the four-digit resistor
    // code (2201 = 2.2 kΩ): common practice.
    for (const [slug, key, code, unitScale] of [
      ['vr240-glows-when-off', 'c5', '103', 1e-12],
      ['px10-no-detection', 'c1', '684', 1e-12],
      ['cv24-output-low', 'divider', '2201', 1],
    ] as const) {
      const step = stepOf(slug, key)
      expect(step.instruction).toContain(`**${code}`)
      const value = Number(code.slice(0, -1)) * 10 ** Number(code.slice(-1)) * unitScale
      const { min, max } = expectedWindow(step.measurement!)
      expect(value).toBeGreaterThanOrEqual(min!)
      expect(value).toBeLessThanOrEqual(max!)
    }
  })

  it('states stored energies that match ½·C·V² at the 230 V mains peak', () => {
    // Computed: E = ½·C·V², V = 230·√2 = 325.27 V; 100 µF holds 5.29 J.
    const peak = 230 * Math.SQRT2
    const energy = (c: number, v = peak) => 0.5 * c * v * v
    expect(energy(100e-6).toFixed(2)).toBe('5.29')
    expect(allText(parsed(current(procedureBySlug('cv24-output-low'))))).toContain('100 µF holds 5.29 J')
    expect(energy(33e-6).toFixed(1)).toBe('1.7')
    expect(allText(parsed(current(procedureBySlug('qc30-hiccup'))))).toContain('about 1.7 J')
    expect(energy(4.7e-6).toFixed(2)).toBe('0.25')
    expect(energy(470e-6, 48).toFixed(2)).toBe('0.54')
    expect(allText(parsed(current(procedureBySlug('cc350-flicker-when-dimmed'))))).toMatch(/0\.25 J[\s\S]*0\.54 J/)
  })

  it('quotes currents that follow from the ratings', () => {
    // Computed: 400 W at 230 V = 1.74 A; a 47 nF capacitor at 230 V 50 Hz passes V·2πfC = 3.4 mA.
    expect((400 / 230).toFixed(2)).toBe('1.74')
    expect(expectedWindow(stepOf('pd400-scorch-marks', 'load_current').measurement!).max).toBe(1.74)
    expect((230 * 2 * Math.PI * 50 * 47e-9 * 1000).toFixed(1)).toBe('3.4')
    expect(allText(parsed(current(procedureBySlug('vr240-glows-when-off'))))).toContain('47 nF passes about 3.4 mA')
  })

  it('uses the USB PD and Type-C voltage windows', () => {
    // USB PD fixed supply ±5 % (from memory); USB Type-C vSafe5V 4.75–5.50 V (from memory).
    for (const [key, volts] of [['customer_cable', 9], ['bench_cable', 9], ['pd_20v', 20]] as const) {
      const { min, max } = expectedWindow(stepOf('qc30-stays-at-5v', key).measurement!)
      expect(min, key).toBeCloseTo(volts * 0.95, 9)
      expect(max, key).toBeCloseTo(volts * 1.05, 9)
    }
    expect(expectedWindow(stepOf('qc30-hiccup', 'confirm').measurement!)).toEqual({ min: 4.75, max: 5.5 })
  })
})

describe('demo safety wording', () => {
  it('marks mains honestly and defers to local codes wherever mains is involved', () => {
    for (const { procedure, revision, index } of ALL_REVISIONS) {
      const c = parsed(revision)
      const label = `${procedure.slug} #${index + 1}`
      expect(c.hazards, label).toContain('mains')
      expect(allText(c), label).toMatch(/local (electrical codes|rules)/)
    }
  })

  it('marks stored energy wherever a step discharges a capacitor, and verifies the discharge with a meter', () => {
    for (const { procedure, revision, index } of ALL_REVISIONS) {
      const c = parsed(revision)
      const discharge = c.steps.filter(s => s.key === 'discharge')
      for (const step of discharge) {
        expect(c.hazards, `${procedure.slug} #${index + 1}`).toContain('stored_energy')
        expect(step.measurement?.quantity).toBe('dc_voltage')
        expect(step.instruction).toMatch(/resistor/)
        expect(step.instruction).toMatch(/Do not trust the bleeder/)
      }
    }
  })

  it('sends every live test through an isolating transformer and a differential probe', () => {
    for (const { procedure, revision } of ALL_REVISIONS) {
      for (const step of parsed(revision).steps) {
        if (!/Live test/.test(step.instruction)) continue
        expect(step.instruction, `${procedure.slug}/${step.key}`).toMatch(/isolating transformer/)
        expect(step.instruction, `${procedure.slug}/${step.key}`).toMatch(/differential probe/)
        expect(step.instruction, `${procedure.slug}/${step.key}`).toMatch(/qualified personnel/)
      }
    }
  })

  it('names CAT III for work on dimmers still in the wall', () => {
    // IEC 61010-1 measurement categories: a wall dimmer is part of the building installation (CAT III).
    const dimmerProcedures = DEMO_PROCEDURES.filter(p => /dimmer/.test(parsed(current(p)).deviceType))
    const withCatIII = dimmerProcedures.filter(p => /CAT III/.test(allText(parsed(current(p)))))
    expect(withCatIII.length).toBeGreaterThanOrEqual(3)
  })
})

describe('demo record profile', () => {
  const active = DEMO_PROCEDURES.filter(p => !p.retired && published(p))

  it('has a profile for each published, active procedure and no other', () => {
    expect(Object.keys(DEMO_RECORD_PROFILE).sort()).toEqual(active.map(p => p.slug).sort())
  })

  it.each(active.map(p => [p.slug, p] as const))('%s: causes match the published revision, unevenly', (slug, procedure) => {
    const profile = DEMO_RECORD_PROFILE[slug]!
    const causeKeys = parsed(published(procedure)!).causes.map(c => c.key)
    expect(Object.keys(profile.causes).sort()).toEqual([...causeKeys].sort())
    const shares = Object.values(profile.causes)
    expect(shares.reduce((a, b) => a + b, 0)).toBeCloseTo(1, 9)
    expect(Math.max(...shares)).toBeGreaterThanOrEqual(3 * Math.min(...shares))
    expect(profile.weight).toBeGreaterThan(0)
    for (const rate of [profile.noFaultFound, profile.comebackRate, profile.notEconomicalRate]) {
      expect(rate).toBeGreaterThanOrEqual(0)
      expect(rate).toBeLessThan(0.5)
    }
    expect(profile.minutes[0]).toBeGreaterThan(0)
    expect(profile.minutes[0]).toBeLessThan(profile.minutes[1])
    expect(profile.partsCostEur[0]).toBeGreaterThanOrEqual(0)
    expect(profile.partsCostEur[0]).toBeLessThan(profile.partsCostEur[1])
    expect(profile.partsCostEur[1]).toBeLessThan(profile.replacementCostEur)
  })
})

describe('demo steps and their verdicts', () => {
  const live = DEMO_PROCEDURES.filter(p => published(p)).map(p => ({ slug: p.slug, content: parsed(published(p)!) }))

  it('gives every step of a live procedure an estimate of its minutes', () => {
    for (const { slug, content } of live) for (const step of content.steps) expect(step.minutes, `${slug}/${step.key}`).toBeGreaterThan(0)
  })

  it('tells a short from an open junction where a diode test has both', () => {
    // REFERENCES "Multimeter diode test": shorted < 0.050 V both ways, open OL both ways.
    const bridge = stepOf('vr240-half-cycle-flicker', 'bridge_low')
    expect(verdictCauses(bridge, 'low')).toEqual(['bridge_short'])
    expect(verdictCauses(bridge, 'open')).toEqual([])
    const q1 = stepOf('vr240-stuck-at-full', 'q1_ds')
    expect(verdictCauses(q1, 'low')).toEqual(['q1_short'])
    expect(verdictCauses(q1, 'open')).not.toContain('q1_short')
  })

  it('publishes the two-wire dimmer flow: the same branches as the fixture, valid as a flow', () => {
    // The two-wire dimmer flow (common practice, the product brief's domain facts).
    const flow = parsed(published(procedureBySlug('vr240-half-cycle-flow'))!)
    expect(isFlow(flow.steps)).toBe(true)
    expect(validateFlow(flow)).toEqual({})
    expect(flow.steps.map(s => s.key)).toEqual(DIMMER_STEPS.map(s => s.key))
    expect(flow.causes.map(c => c.key)).toEqual(DIMMER_CAUSES.map(c => c.key))
    for (const step of DIMMER_STEPS) {
      const demo = flow.steps.find(s => s.key === step.key)!
      for (const [verdict, entry] of Object.entries(step.verdicts ?? {})) {
        expect(demo.verdicts?.[verdict as keyof typeof demo.verdicts], `${step.key} ${verdict}`).toEqual(entry)
      }
    }
  })

  it('lets the flow\'s capture answer its first step: a working trailing-edge dimmer shows a trailing-edge cut', () => {
    // A trailing-edge dimmer switches off part-way through each half-cycle (common practice).
    const flow = parsed(published(procedureBySlug('vr240-half-cycle-flow'))!)
    const capture = flow.steps.find(s => s.key === 'capture')!
    expect(capture.measurement).toBeUndefined()
    expect(capture.expectedCut).toEqual(['trailing_edge'])
  })
})

describe('demo records agree with their confirmed causes', () => {
  const active = DEMO_PROCEDURES.filter(p => !p.retired && published(p))
  const cases = active.flatMap((p) => {
    const content = parsed(published(p)!)
    return [...content.causes.map(c => c.key), null].map(cause => [`${p.slug}: ${cause ?? 'no fault found'}`, content, cause] as const)
  })

  it.each(cases)('%s', (_label, content, cause) => {
    const verdicts = demoVerdicts(content.steps, cause, false)
    const { steps } = demoSteps(content.steps, verdicts, new Date('2026-03-02T09:00:00Z'), seededRandom(7))
    for (const step of content.steps) {
      const verdict = verdicts[step.key]
      if (!verdict) continue
      // The typed reading reads back as the verdict it was written for.
      const value = readingFor(step, verdict)
      expect(steps[step.key]!.value).toBe(value)
      const judged = step.measurement ? evaluateReading(value, step.measurement) : { ok: true, verdict: judgeCheck(value) }
      expect(judged.ok && judged.verdict, `${step.key}: ${value}`).toBe(verdict)
      // In a list of checks, a failing verdict names the cause the record confirms.
      if (!isFlow(content.steps) && !isPassingVerdict(step, verdict)) expect(verdictCauses(step, verdict), `${step.key} ${verdict}`).toContain(cause)
    }
    if (isFlow(content.steps)) {
      expect(followFlow(content.steps, verdicts).concluded).toBe(cause ?? 'escalate')
    }
    else {
      expect(Object.keys(verdicts).sort()).toEqual(content.steps.map(s => s.key).sort())
    }
    if (cause !== null) {
      // With the authors' priors and no records, the readings make the confirmed cause more likely than before.
      const { causes } = causeProbabilities({ causes: content.causes, steps: content.steps, observed: verdicts })
      const mine = causes.find(c => c.key === cause)!
      expect(mine.probability, cause).toBeGreaterThan(mine.prior)
    }
  })

  it('times each reading after the one before, within the job', () => {
    const content = parsed(published(procedureBySlug('vr240-stuck-at-full'))!)
    const start = new Date('2026-03-02T09:00:00Z')
    const { steps, minutes } = demoSteps(content.steps, demoVerdicts(content.steps, 'q1_short', false), start, seededRandom(3))
    const times = content.steps.map(s => Date.parse(steps[s.key]!.readAt!))
    for (let i = 1; i < times.length; i++) expect(times[i]!).toBeGreaterThan(times[i - 1]!)
    expect(times[times.length - 1]! - start.getTime()).toBe(minutes * 60_000)
  })
})

describe('demo bench images', () => {
  async function thumbnail(jpeg: Buffer): Promise<Buffer> {
    // Above the caption strip only, so the pictures must differ, not just their captions.
    return sharp(jpeg).extract({ left: 0, top: 0, width: DEMO_IMAGE_WIDTH, height: DEMO_IMAGE_HEIGHT - 100 }).resize(48, 32, { fit: 'fill' }).removeAlpha().raw().toBuffer()
  }

  it('draws every image as a 1200×800 JPEG, the same each time, each unlike the others', async () => {
    const thumbs: Buffer[] = []
    for (const image of DEMO_IMAGES) {
      const jpeg = await renderDemoImage(image.name)
      const meta = await sharp(jpeg).metadata()
      expect(meta.format, image.name).toBe('jpeg')
      expect([meta.width, meta.height], image.name).toEqual([DEMO_IMAGE_WIDTH, DEMO_IMAGE_HEIGHT])
      thumbs.push(await thumbnail(jpeg))
    }
    const again = await thumbnail(await renderDemoImage(DEMO_IMAGES[0]!.name))
    expect(again.equals(thumbs[0]!)).toBe(true)
    for (let i = 0; i < thumbs.length; i++) {
      for (let j = i + 1; j < thumbs.length; j++) {
        let sum = 0
        for (let k = 0; k < thumbs[i]!.length; k++) sum += Math.abs(thumbs[i]![k]! - thumbs[j]![k]!)
        expect(sum / thumbs[i]!.length, `${DEMO_IMAGES[i]!.name} vs ${DEMO_IMAGES[j]!.name}`).toBeGreaterThan(8)
      }
    }
  }, 60_000)

  it('refuses a name that is not a demo image', async () => {
    await expect(renderDemoImage('not-a-demo-image.jpg')).rejects.toThrow(/no demo image/)
  })
})
