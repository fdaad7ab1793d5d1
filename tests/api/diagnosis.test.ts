import { randomBytes } from 'node:crypto'
import { beforeAll, describe, expect, it } from 'vitest'
import type { RevisionContentInput } from '../../shared/types/procedure'
import type { DashboardDto, DiagnosisDto } from '../../shared/types/records'
import { verdictCauses } from '../../shared/types/verdicts'
import { followFlow } from '../../shared/utils/diagnosis'
import { Procedure, RepairRecord, Revision } from '../../server/db'
import { DEMO, signedIn, type ApiClient } from '../helpers/api'
import { makeContent } from '../helpers/content'
import { testDb } from '../helpers/db'

// Guided diagnosis that reasons, through the routes: per-verdict causes, live probabilities, the
// next step by the p/c rule, branching flows, done marks, the close form kept, learned counts.
// Procedures here are invented test data on a device type of their own, so no demo record
// moves their evidence.

let author: ApiClient
let editor: ApiClient
let tech: ApiClient
let deviceType = ''

beforeAll(async () => {
  author = await signedIn(DEMO.author)
  editor = await signedIn(DEMO.editor)
  tech = await signedIn(DEMO.technician)
  const type = await editor.post('/api/device-types', { name: `Reasoning test dimmer ${randomBytes(3).toString('hex')}`, description: 'Test device type.' })
  expect(type.status).toBe(201)
  deviceType = type.body.deviceType.slug
})

async function draft(content: RevisionContentInput) {
  const created = await author.post('/api/procedures', { content: { ...content, deviceType } })
  expect(created.status, JSON.stringify(created.body)).toBe(201)
  return created.body as { procedure: { slug: string }, revision: { id: number } }
}

async function publish(content: RevisionContentInput): Promise<string> {
  const { procedure, revision } = await draft(content)
  const submitted = await author.post(`/api/revisions/${revision.id}/submit`)
  expect(submitted.status, JSON.stringify(submitted.body)).toBe(200)
  expect((await editor.post(`/api/revisions/${revision.id}/approve`)).status).toBe(200)
  return procedure.slug
}

async function startRecord(slug: string) {
  const res = await tech.post('/api/records', { procedureSlug: slug, unit: { model: 'Test unit', serial: 'T-9', jobRef: 'R-1' } })
  expect(res.status, JSON.stringify(res.body)).toBe(201)
  return res.body.record as { id: number, version: number }
}

/** Saves readings on a record (each step `{ value }`) and answers the record. */
async function read(record: { id: number, version: number }, values: Record<string, string>) {
  const steps = Object.fromEntries(Object.entries(values).map(([k, value]) => [k, { value, note: '', done: false }]))
  const res = await tech.patch(`/api/records/${record.id}`, { version: record.version, steps })
  expect(res.status, JSON.stringify(res.body)).toBe(200)
  record.version = res.body.record.version
  return res.body.record
}

async function diagnosis(id: number): Promise<DiagnosisDto> {
  const res = await tech.get(`/api/records/${id}/diagnosis`)
  expect(res.status, JSON.stringify(res.body)).toBe(200)
  return res.body
}

const probabilityOf = (d: DiagnosisDto, key: string) => d.causes.find(c => c.id.endsWith(`:${key}`))!.probability
const total = (d: DiagnosisDto) => d.causes.reduce((s, c) => s + c.probability, 0) + d.unlisted

const step = (key: string, extra: Record<string, unknown>) => ({ key, title: `Step ${key}`, instruction: `Do ${key}.`, ...extra })
// Multimeter diode test (REFERENCES): a good silicon junction 0.40–0.90 V, shorted < 0.050 V, open OL.
const DIODE = { quantity: 'diode_drop', unit: 'V', min: 0.4, max: 0.9 } as const

/** The two-wire dimmer flow (common practice; the product brief's domain facts), as a procedure. */
function dimmerFlow(): RevisionContentInput {
  return makeContent({
    causes: [
      { key: 'switch_shorted', name: 'Switching device shorted', prior: 0.35 },
      { key: 'bridge_shorted', name: 'Bridge diode shorted', prior: 0.45 },
      { key: 'thermal_fuse_open', name: 'Thermal fuse open', prior: 0.2 },
    ],
    steps: [
      step('capture', { title: 'Capture the load voltage', verdicts: { fail: { next: 'switch' }, pass: { conclude: 'escalate' } }, minutes: 6 }),
      step('switch', { title: 'Diode-test the switching device', measurement: { quantity: 'diode_drop', unit: 'V', min: 0.4, max: 0.7 }, verdicts: { in_range: { next: 'bridge' }, low: { conclude: 'switch_shorted' }, open: { conclude: 'escalate' } }, minutes: 4 }),
      step('bridge', { title: 'Diode-test each bridge diode', measurement: DIODE, verdicts: { low: { conclude: 'bridge_shorted' }, in_range: { next: 'fuse' } }, minutes: 8 }),
      step('fuse', { title: 'Check the thermal fuse', measurement: { quantity: 'continuity', unit: 'Ω', max: 1 }, verdicts: { open: { conclude: 'thermal_fuse_open' }, in_range: { conclude: 'escalate' } }, minutes: 3 }),
    ],
  })
}

describe('flows are checked at submission', () => {
  async function refused(content: RevisionContentInput) {
    const { revision } = await draft(content)
    const res = await author.post(`/api/revisions/${revision.id}/submit`)
    expect(res.status, JSON.stringify(res.body)).toBe(422)
    return res.body.data.fields as Record<string, string>
  }

  it('names a next step that does not exist, by step and verdict', async () => {
    const content = dimmerFlow()
    content.steps[2]!.verdicts = { low: { conclude: 'bridge_shorted' }, in_range: { next: 's9' } }
    const fields = await refused(content)
    expect(fields['steps.2.verdicts.in_range.next']).toMatch(/"s9" is not a step of this procedure/)
    expect(fields['steps.2.verdicts.in_range.next']).toMatch(/if it reads in range/)
  })

  it('names a conclusion that is not a cause of the procedure', async () => {
    const content = dimmerFlow()
    content.steps[1]!.verdicts = { in_range: { next: 'bridge' }, low: { conclude: 'q9_gone' } }
    const fields = await refused(content)
    expect(fields['steps.1.verdicts.low.conclude']).toMatch(/"q9_gone" is not a cause of this procedure/)
  })

  it('names the verdict that closes a loop', async () => {
    const content = dimmerFlow()
    content.steps[3]!.verdicts = { open: { conclude: 'thermal_fuse_open' }, in_range: { next: 'switch' } }
    const fields = await refused(content)
    expect(fields['steps.3.verdicts.in_range.next']).toMatch(/makes a loop \(switch → bridge → fuse → switch\)/)
  })

  it('names a step that no path from the first step reaches', async () => {
    const content = dimmerFlow()
    // Every verdict of the switch test now ends the flow, so nothing leads to the bridge or the fuse.
    content.steps[1]!.verdicts = { in_range: { conclude: 'escalate' }, low: { conclude: 'switch_shorted' }, high: { conclude: 'escalate' }, open: { conclude: 'escalate' } }
    const fields = await refused(content)
    expect(fields['steps.2']).toMatch(/cannot be reached from the first step/)
    expect(fields['steps.3']).toMatch(/cannot be reached from the first step/)
  })

  it('names a verdict the step cannot give', async () => {
    const content = dimmerFlow()
    content.steps[1]!.verdicts = { in_range: { next: 'bridge' }, low: { conclude: 'switch_shorted' }, pass: { next: 'bridge' } }
    const fields = await refused(content)
    expect(fields['steps.1.verdicts.pass']).toMatch(/cannot read pass/)
  })

  it('refuses a step without an instruction, naming the field', async () => {
    const content = makeContent()
    content.steps[1]!.instruction = '   '
    const fields = await refused(content)
    expect(fields['steps.1.instruction']).toMatch(/say what to do/)
  })

  it('keeps drafts loose: a flow with a loop and an unknown step saves as a draft', async () => {
    const content = dimmerFlow()
    content.steps[3]!.verdicts = { in_range: { next: 'capture' }, open: { next: 'nowhere' } }
    await draft(content)
  })

  it('stores failPointsTo as the same causes on every failing verdict', async () => {
    const { revision } = await draft(makeContent())
    const res = await author.get(`/api/revisions/${revision.id}`)
    const fet = res.body.content.steps[0]
    expect(fet.failPointsTo).toBeUndefined()
    // A diode test with a window gives low, high and open as failing verdicts (possibleVerdicts).
    expect(fet.verdicts).toEqual({ low: { causes: ['shorted-fet'] }, high: { causes: ['shorted-fet'] }, open: { causes: ['shorted-fet'] } })
  })
})

describe('a branching flow at the bench', () => {
  let slug = ''
  beforeAll(async () => {
    slug = await publish(dimmerFlow())
  })

  it('walks two paths through one flow and concludes two causes', async () => {
    const record = await startRecord(slug)
    let d = await diagnosis(record.id)
    expect(d).toMatchObject({ isFlow: true, path: ['capture'], concluded: null, warning: null })
    expect(d.next.map(n => n.stepKey)).toEqual(['capture'])

    await read(record, { capture: 'fail' })
    d = await diagnosis(record.id)
    expect(d.path).toEqual(['capture', 'switch'])
    expect(d.next.map(n => n.stepKey)).toEqual(['switch'])

    // The switching device reads near 0 V: shorted (a shorted junction reads < 0.050 V).
    await read(record, { switch: '0.012 V' })
    d = await diagnosis(record.id)
    expect(d.path).toEqual(['capture', 'switch'])
    expect(d.concluded).toEqual({ id: `${slug}:switch_shorted`, label: 'Switching device shorted' })
    expect(d.next).toEqual([])

    // Read again, it is a good junction; the bridge reads shorted instead.
    await read(record, { switch: '0.55 V' })
    d = await diagnosis(record.id)
    expect(d.path).toEqual(['capture', 'switch', 'bridge'])
    expect(d.concluded).toBeNull()
    expect(d.next.map(n => n.stepKey)).toEqual(['bridge'])
    await read(record, { bridge: '0.01' })
    d = await diagnosis(record.id)
    expect(d.path).toEqual(['capture', 'switch', 'bridge'])
    expect(d.concluded).toEqual({ id: `${slug}:bridge_shorted`, label: 'Bridge diode shorted' })
    expect(d.next).toEqual([])
    expect(total(d)).toBeCloseTo(1, 9)
  })

  it('keeps off-path readings as evidence without leaving the path', async () => {
    const record = await startRecord(slug)
    const before = await diagnosis(record.id)
    await read(record, { fuse: 'OL' })
    const after = await diagnosis(record.id)
    expect(after.path).toEqual(['capture'])
    expect(after.next.map(n => n.stepKey)).toEqual(['capture'])
    expect(probabilityOf(after, 'thermal_fuse_open')).toBeGreaterThan(probabilityOf(before, 'thermal_fuse_open'))
  })

  it('warns when the flow concludes a cause the readings make unlikely', async () => {
    const doubted = await publish(makeContent({
      causes: [{ key: 'a', name: 'Cause A', prior: 0.5 }, { key: 'b', name: 'Cause B', prior: 0.5 }],
      steps: [
        step('s1', { verdicts: { fail: { conclude: 'a' }, pass: { next: 's2' } } }),
        step('s2', { measurement: DIODE, verdicts: { low: { conclude: 'b' }, in_range: { next: 's3' } } }),
        step('s3', { measurement: DIODE, verdicts: { low: { causes: ['b'] } } }),
        step('s4', { measurement: DIODE, verdicts: { low: { causes: ['b'] }, in_range: { conclude: 'escalate' } } }),
      ],
    }))
    const record = await startRecord(doubted)
    await read(record, { s1: 'fail' })
    expect((await diagnosis(record.id)).warning).toBeNull()
    // Three shorted junctions off the path, each pointing at B (naive Bayes with the authors' word
    // as 6 pseudo-records gives A about 2 %, under the 10 % doubt threshold).
    await read(record, { s2: '0.01', s3: '0.01', s4: '0.01' })
    const d = await diagnosis(record.id)
    expect(d.concluded).toEqual({ id: `${doubted}:a`, label: 'Cause A' })
    expect(probabilityOf(d, 'a')).toBeLessThan(0.1)
    expect(d.warning).toMatch(/The flow concludes “Cause A”, but the readings and records give it/)
    expect(d.warning).toMatch(/they favour “Cause B”/)
  })
})

describe('a list of checks at the bench', () => {
  let slug = ''
  beforeAll(async () => {
    // REFERENCES "Reasoning from readings": p = (0.5, 0.3, 0.2), c = (5, 1, 2) min → p/c = 0.1,
    // 0.3, 0.1, so the second step first, then the first and the third (a tie, in list order).
    slug = await publish(makeContent({
      causes: [
        { key: 'shorted', name: 'Junction shorted', prior: 0.5 },
        { key: 'open_junction', name: 'Junction open', prior: 0.3 },
        { key: 'dry_cap', name: 'Capacitor dried out', prior: 0.2 },
      ],
      steps: [
        step('s_short', { measurement: DIODE, verdicts: { low: { causes: ['shorted'] } }, minutes: 5 }),
        step('s_open', { measurement: DIODE, verdicts: { open: { causes: ['open_junction'] } }, minutes: 1 }),
        step('s_cap', { verdicts: { fail: { causes: ['dry_cap'] } }, minutes: 2 }),
      ],
    }))
  })

  it('suggests the untested steps by findsFault per minute, with no path', async () => {
    const record = await startRecord(slug)
    const d = await diagnosis(record.id)
    expect(d).toMatchObject({ isFlow: false, path: [], concluded: null, warning: null })
    expect(d.next[0]!.stepKey).toBe('s_open')
    expect(d.next.map(n => n.stepKey).sort()).toEqual(['s_cap', 's_open', 's_short'])
    expect(d.next.every(n => n.minutesFrom === 'author')).toBe(true)
    const at = (key: string) => d.next.find(n => n.stepKey === key)!
    expect([at('s_short').minutes, at('s_open').minutes, at('s_cap').minutes]).toEqual([5, 1, 2])
    // With no records the evidence ranking keeps the authors' proportions 0.5 : 0.3 : 0.2.
    expect(at('s_open').findsFault / at('s_short').findsFault).toBeCloseTo(0.3 / 0.5, 6)
    expect(at('s_cap').findsFault / at('s_short').findsFault).toBeCloseTo(0.2 / 0.5, 6)
    // The other two tie at p/c = 0.1 (either order costs the same).
    expect(at('s_short').findsFault / 5).toBeCloseTo(at('s_cap').findsFault / 2, 9)
    expect(total(d)).toBeCloseTo(1, 9)

    // Any step may be done in any order; a step read leaves the list.
    await read(record, { s_cap: 'pass' })
    expect((await diagnosis(record.id)).next.map(n => n.stepKey)).toEqual(['s_open', 's_short'])
  })

  it('moves the probabilities with readings: a good reading lowers its causes, a failing one raises them', async () => {
    const good = await startRecord(slug)
    const bad = await startRecord(slug)
    const before = await diagnosis(good.id)
    await read(good, { s_short: '0.55 V' })
    await read(bad, { s_short: '0.012 V' })
    const afterGood = await diagnosis(good.id)
    const afterBad = await diagnosis(bad.id)
    expect(probabilityOf(afterGood, 'shorted')).toBeLessThan(probabilityOf(before, 'shorted'))
    expect(probabilityOf(afterBad, 'shorted')).toBeGreaterThan(probabilityOf(before, 'shorted'))
    for (const d of [before, afterGood, afterBad]) {
      expect(total(d)).toBeCloseTo(1, 9)
      expect(d.causes.map(c => c.probability)).toEqual([...d.causes.map(c => c.probability)].sort((a, b) => b - a))
    }
    expect(afterBad.causes[0]!.id).toBe(`${slug}:shorted`)
  })

  it('raises different causes for a diode test that reads short and one that reads open', async () => {
    // Multimeter diode test (REFERENCES): shorted < 0.050 V both ways, open junction OL both ways.
    const diode = await publish(makeContent({
      causes: [{ key: 'shorted', name: 'Diode shorted', prior: 0.5 }, { key: 'open_junction', name: 'Diode open', prior: 0.5 }],
      steps: [step('d1', { measurement: DIODE, verdicts: { low: { causes: ['shorted'] }, open: { causes: ['open_junction'] } } })],
    }))
    const short = await startRecord(diode)
    const open = await startRecord(diode)
    const before = await diagnosis(short.id)
    const shortRecord = await read(short, { d1: '0.012' })
    const openRecord = await read(open, { d1: 'OL' })
    const afterShort = await diagnosis(short.id)
    const afterOpen = await diagnosis(open.id)
    expect(afterShort.causes[0]!.id).toBe(`${diode}:shorted`)
    expect(afterOpen.causes[0]!.id).toBe(`${diode}:open_junction`)
    expect(probabilityOf(afterShort, 'open_junction')).toBeLessThan(probabilityOf(before, 'open_junction'))
    expect(probabilityOf(afterOpen, 'shorted')).toBeLessThan(probabilityOf(before, 'shorted'))
    expect(shortRecord.steps.d1).toMatchObject({ verdict: 'low', result: { raises: ['shorted'] } })
    expect(openRecord.steps.d1).toMatchObject({ verdict: 'open', result: { raises: ['open_junction'] } })
    expect(shortRecord.raised.map((r: { cause: string }) => r.cause)).toEqual([`${diode}:shorted`])
  })

  it('marks a readable reading done and refuses done on an unreadable one', async () => {
    const record = await startRecord(slug)
    const saved = await read(record, { s_short: '0.55 V', s_cap: 'fail' })
    expect(saved.steps.s_short).toMatchObject({ value: '0.55 V', done: true, verdict: 'in_range' })
    expect(Date.parse(saved.steps.s_short.readAt)).toBeGreaterThan(Date.now() - 600_000)
    expect(saved.steps.s_cap).toMatchObject({ done: true, verdict: 'fail' })
    const unreadable = await tech.patch(`/api/records/${record.id}`, { version: record.version, steps: { s_open: { value: '4x7', note: '', done: true } } })
    expect(unreadable.status).toBe(422)
    expect(unreadable.body.data.fields['steps.s_open.done']).toMatch(/4x7/)
    const questioned = await tech.patch(`/api/records/${record.id}`, { version: record.version, steps: { s_open: { value: '580MV', note: '', done: true } } })
    expect(questioned.status).toBe(422)
    expect(questioned.body.data.fields['steps.s_open.done']).toMatch(/did you mean 580 mV\?/)
    // Kept without the done mark, with no verdict.
    const kept = await read(record, { s_open: '4x7' })
    expect(kept.steps.s_open).toMatchObject({ value: '4x7', done: false, verdict: null, readAt: null })
    // A reading left unchanged keeps the time it was first read.
    const again = await read(record, { s_short: '0.55 V' })
    expect(again.steps.s_short.readAt).toBe(saved.steps.s_short.readAt)
    // A save naming only the note keeps the reading, its verdict, its done mark and its time.
    const noted = await tech.patch(`/api/records/${record.id}`, { version: record.version, steps: { s_short: { note: 'probe on the anode pad' } } })
    expect(noted.status, JSON.stringify(noted.body)).toBe(200)
    record.version = noted.body.record.version
    expect(noted.body.record.steps.s_short).toMatchObject({ value: '0.55 V', note: 'probe on the anode pad', done: true, verdict: 'in_range', readAt: saved.steps.s_short.readAt })
    // A done mark sent alone on a step without a reading stays (a look or a listen may need none).
    const marked = await tech.patch(`/api/records/${record.id}`, { version: record.version, steps: { s_cap: { value: '' } } })
    record.version = marked.body.record.version
    expect(marked.body.record.steps.s_cap).toMatchObject({ value: '', done: false, verdict: null })
    const byHand = await tech.patch(`/api/records/${record.id}`, { version: record.version, steps: { s_cap: { done: true } } })
    expect(byHand.status, JSON.stringify(byHand.body)).toBe(200)
    record.version = byHand.body.record.version
    expect(byHand.body.record.steps.s_cap).toMatchObject({ value: '', done: true, verdict: null })
    const noteOnly = await tech.patch(`/api/records/${record.id}`, { version: record.version, steps: { s_cap: { note: 'lid off, nothing bulging' } } })
    expect(noteOnly.body.record.steps.s_cap).toMatchObject({ done: true, note: 'lid off, nothing bulging' })
  })

  it('keeps the close form across a reload, and clears it on closing', async () => {
    const record = await startRecord(slug)
    const closeDraft = { confirmedCause: `${slug}:dry_cap`, outcome: 'repaired', parts: [{ name: 'Capacitor 22 µF', cost: 0.4 }], minutes: 25, replacementCost: null }
    const saved = await tech.patch(`/api/records/${record.id}`, { version: record.version, closeDraft })
    expect(saved.status).toBe(200)
    const reloaded = await tech.get(`/api/records/${record.id}`)
    expect(reloaded.body.record.closeDraft).toEqual(closeDraft)
    const closed = await tech.post(`/api/records/${record.id}/close`, { confirmedCause: `${slug}:dry_cap`, outcome: 'repaired', minutes: 25 })
    expect(closed.status).toBe(200)
    expect(closed.body.record.closeDraft).toBeNull()
  })

  it('learns from closing and amending: the verdict counts move in the same step', async () => {
    const counts = async () => (await tech.get(`/api/records/${(await startRecord(slug)).id}`)).body.record.reasoning
    const before = await counts()
    const record = await startRecord(slug)
    await read(record, { s_short: '0.012 V', s_open: '0.6 V' })
    const closed = await tech.post(`/api/records/${record.id}/close`, { confirmedCause: `${slug}:shorted`, outcome: 'repaired', minutes: 20 })
    expect(closed.status).toBe(200)
    const after = await counts()
    const n = (r: typeof before, s: string, v: string, c: string) => r.stats.verdicts[s]?.[v]?.[c] ?? 0
    expect(after.stats.records).toBe(before.stats.records + 1)
    expect(n(after, 's_short', 'low', 'shorted')).toBe(n(before, 's_short', 'low', 'shorted') + 1)
    expect(n(after, 's_open', 'in_range', 'shorted')).toBe(n(before, 's_open', 'in_range', 'shorted') + 1)
    const timed = (r: typeof before) => Object.values(r.stats.minutes.s_short ?? {}).reduce((a: number, b) => a + Number(b), 0)
    expect(timed(after)).toBe(timed(before) + 1)
    const amended = await tech.post(`/api/records/${record.id}/amendments`, { reason: 'The capacitor was the fault', changes: { confirmedCause: `${slug}:dry_cap` } })
    expect(amended.status).toBe(201)
    const moved = await counts()
    expect(moved.stats.records).toBe(after.stats.records)
    expect(n(moved, 's_short', 'low', 'shorted')).toBe(n(before, 's_short', 'low', 'shorted'))
    expect(n(moved, 's_short', 'low', 'dry_cap')).toBe(n(before, 's_short', 'low', 'dry_cap') + 1)
  })
})

describe('a questioned reading', () => {
  it('asks "did you mean 580 mV?" for 580MV on a 0.4–0.9 V diode test', async () => {
    // REFERENCES "Multimeter diode test": a good junction reads 0.40–0.90 V; 580 MV (megavolts)
    // is a case slip for 580 mV.
    const res = await tech.post('/api/readings/evaluate', { value: '580MV', spec: DIODE })
    expect(res.status).toBe(200)
    expect(res.body).toMatchObject({ verdict: null, pass: null, question: 'did you mean 580 mV?', suggestion: '580 mV', raises: [] })
    const plain = await tech.post('/api/readings/evaluate', { value: '580 mV', spec: DIODE, verdicts: { low: { causes: ['shorted'] } } })
    expect(plain.body).toMatchObject({ verdict: 'in_range', pass: true, question: null, suggestion: null })
    const low = await tech.post('/api/readings/evaluate', { value: '12 mV', spec: DIODE, verdicts: { low: { causes: ['shorted'] }, open: { causes: ['open_junction'] } } })
    expect(low.body).toMatchObject({ verdict: 'low', raises: ['shorted'] })
  })
})

describe('the dashboard on the demo data', () => {
  async function demo(slug: string) {
    testDb()
    const proc = (await Procedure.findOne({ where: { slug } }))!
    const content = (await Revision.findByPk(proc.publishedRevisionId!))!.content
    const closed = await RepairRecord.findAll({ where: { status: 'closed', procedureId: proc.id } })
    return { content, closed: closed.map(r => ({ r, listed: r.causeProcedureId === proc.id && content.causes.some(c => c.key === r.causeKey) })) }
  }

  it('shows per procedure how often each step\'s verdict named the cause finally confirmed (a hand count over the records)', async () => {
    const dashboard = (await editor.get('/api/dashboard')).body as DashboardDto
    const slug = 'vr240-stuck-at-full'
    const { content, closed } = await demo(slug)
    const hand = content.steps.map((step) => {
      const read = closed.filter(x => x.listed && x.r.steps[step.key]?.verdict)
      const decided = read.filter(x => verdictCauses(step, x.r.steps[step.key]!.verdict!).includes(x.r.causeKey!))
      return { stepKey: step.key, title: step.title, decided: decided.length, of: read.length }
    }).filter(x => x.of > 0).sort((a, b) => b.decided - a.decided)
    const shown = dashboard.decidingSteps.find(p => p.procedureSlug === slug)!
    expect(shown.procedureTitle).toBe(content.title)
    expect([...shown.steps].sort((a, b) => a.stepKey.localeCompare(b.stepKey))).toEqual([...hand].sort((a, b) => a.stepKey.localeCompare(b.stepKey)))
    expect(shown.steps.map(s => s.decided)).toEqual(hand.map(s => s.decided))
    // The body-diode test is what names a shorted Q1, the commonest cause in the demo records.
    expect(shown.steps.find(s => s.stepKey === 'q1_ds')!.decided).toBeGreaterThan(0)
  })

  it('shows per flow how often each branch was taken and its conclusion confirmed (a hand count over the records)', async () => {
    const dashboard = (await editor.get('/api/dashboard')).body as DashboardDto
    const slug = 'vr240-half-cycle-flow'
    const { content, closed } = await demo(slug)
    const taken = new Map<string, { taken: number, confirmed: number }>()
    for (const { r } of closed) {
      const verdicts = Object.fromEntries(Object.entries(r.steps).map(([k, s]) => [k, s.verdict ?? null]))
      for (const b of followFlow(content.steps, verdicts).taken) {
        const row = taken.get(`${b.stepKey}/${b.verdict}`) ?? { taken: 0, confirmed: 0 }
        row.taken += 1
        if (b.conclude === 'escalate' ? r.outcome === 'escalated' : b.conclude !== undefined && b.conclude === r.causeKey) row.confirmed += 1
        taken.set(`${b.stepKey}/${b.verdict}`, row)
      }
    }
    const flow = dashboard.flowBranches.find(f => f.procedureSlug === slug)!
    expect(flow.branches.length).toBeGreaterThan(0)
    for (const b of flow.branches) {
      const hand = taken.get(`${b.stepKey}/${b.verdict}`) ?? { taken: 0, confirmed: 0 }
      expect(b.taken, `${b.stepKey}/${b.verdict}`).toBe(hand.taken)
      expect(b.confirmed, `${b.stepKey}/${b.verdict}`).toBe(b.concludes ? hand.confirmed : null)
    }
    const short = flow.branches.find(b => b.stepKey === 'switch' && b.verdict === 'low')!
    expect(short.concludes).toEqual({ id: `${slug}:switch_shorted`, label: 'MOSFET Q1 shorted drain–source' })
    expect(short.taken).toBeGreaterThan(0)
    expect(flow.branches.find(b => b.stepKey === 'capture' && b.verdict === 'fail')!.concludes).toBeNull()
    // A procedure that is not a flow has no branches to show.
    expect(dashboard.flowBranches.map(f => f.procedureSlug)).not.toContain('vr240-stuck-at-full')
  })
})
