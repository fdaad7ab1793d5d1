import { parse } from 'csv-parse/sync'
import { describe, expect, it } from 'vitest'
import { Procedure, RepairRecord, Revision } from '../../server/db'
import { ApiClient, DEMO, signedIn } from '../helpers/api'
import { FACTORY_PASSWORD, makeUser, testDb } from '../helpers/db'
import { waitForMail } from '../helpers/stack'

const SLUG = 'vr240-stuck-at-full'

async function start(client: ApiClient, body: Record<string, unknown> = { procedureSlug: SLUG }) {
  const res = await client.post('/api/records', { unit: { model: 'VR-240 rev C', serial: 'T-1', jobRef: 'TEST-1' }, ...body })
  expect(res.status, JSON.stringify(res.body)).toBe(201)
  return res.body.record
}

describe('repair records', () => {
  it('pins the published revision and evaluates saved readings on the server', async () => {
    const tech = await signedIn(DEMO.technician)
    const record = await start(tech)
    testDb()
    const proc = await Procedure.findOne({ where: { slug: SLUG } })
    expect(record.revision.id).toBe(proc!.publishedRevisionId)
    type Step = { key: string, measurement?: { min?: number, max?: number, unit: string }, failPointsTo?: string[] }
    const step = (record.guide.content.steps as Step[]).find(s => s.measurement?.min !== undefined && s.measurement.min > 0 && s.failPointsTo?.length)!
    // Ten times below the lower limit: a failing reading whatever the step measures.
    const low = `${step.measurement!.min! / 10} ${step.measurement!.unit}`
    const saved = await tech.patch(`/api/records/${record.id}`, { version: record.version, steps: { [step.key]: { value: low, note: 'reads low', done: true } } })
    expect(saved.status).toBe(200)
    const result = saved.body.record.steps[step.key].result
    expect(result.pass).toBe(false)
    expect(saved.body.record.raised.length).toBeGreaterThan(0)
    const stale = await tech.patch(`/api/records/${record.id}`, { version: record.version, notes: 'from another tab' })
    expect(stale.status).toBe(409)
    expect(stale.body.data.current.version).toBe(record.version + 1)
  })

  it('is readable by the whole team, changeable in progress only by its technician or an editor', async () => {
    const tech = await signedIn(DEMO.technician)
    const record = await start(tech)
    const colleague = await new ApiClient().login((await makeUser()).email, FACTORY_PASSWORD)
    expect((await colleague.get(`/api/records/${record.id}`)).status).toBe(200)
    expect((await colleague.patch(`/api/records/${record.id}`, { version: record.version, notes: 'not mine' })).status).toBe(403)
    expect((await colleague.post(`/api/records/${record.id}/close`, { confirmedCause: null, outcome: 'no_fault_found', minutes: 5 })).status).toBe(403)
    const editor = await signedIn(DEMO.editor)
    expect((await editor.patch(`/api/records/${record.id}`, { version: record.version, notes: 'editor note' })).status).toBe(200)
  })

  it('closes with a confirmed cause, then changes only by amendments kept in its history', async () => {
    const tech = await signedIn(DEMO.technician)
    const record = await start(tech)
    const cause = record.candidates[0].id
    const bad = await tech.post(`/api/records/${record.id}/close`, { confirmedCause: 'nope:nothing', outcome: 'repaired', minutes: 30 })
    expect(bad.status).toBe(422)
    expect(bad.body.data.fields).toHaveProperty('confirmedCause')
    const nff = await tech.post(`/api/records/${record.id}/close`, { confirmedCause: cause, outcome: 'no_fault_found', minutes: 30 })
    expect(nff.status).toBe(400)
    const closed = await tech.post(`/api/records/${record.id}/close`, { confirmedCause: cause, outcome: 'repaired', minutes: 42, parts: [{ name: 'MOSFET', cost: 2.5 }], replacementCost: 38 })
    expect(closed.status).toBe(200)
    expect(closed.body.record).toMatchObject({ status: 'closed', outcome: 'repaired', minutes: 42, partsCost: 2.5, replacementCost: 38, confirmedCause: { id: cause } })
    expect((await tech.patch(`/api/records/${record.id}`, { version: closed.body.record.version, notes: 'late' })).status).toBe(409)
    expect((await tech.post(`/api/records/${record.id}/close`, { confirmedCause: cause, outcome: 'repaired', minutes: 1 })).status).toBe(409)
    const other = await new ApiClient().login((await makeUser()).email, FACTORY_PASSWORD)
    expect((await other.post(`/api/records/${record.id}/amendments`, { reason: 'not mine', changes: { minutes: 1 } })).status).toBe(403)
    const noReason = await tech.post(`/api/records/${record.id}/amendments`, { changes: { comeback: true } })
    expect(noReason.status).toBe(400)
    const amended = await tech.post(`/api/records/${record.id}/amendments`, { reason: 'Came back after a week', changes: { comeback: true, minutes: 50 } })
    expect(amended.status).toBe(201)
    expect(amended.body.record).toMatchObject({ comeback: true, minutes: 50 })
    expect(amended.body.record.amendments).toHaveLength(1)
    expect(amended.body.record.amendments[0]).toMatchObject({ reason: 'Came back after a week', changes: { comeback: { before: false, after: true }, minutes: { before: 42, after: 50 } } })
    const other2 = record.candidates.find((c: { id: string }) => c.id !== cause)
    if (other2) {
      const recaused = await tech.post(`/api/records/${record.id}/amendments`, { reason: 'Wrong part blamed', changes: { confirmedCause: other2.id } })
      expect(recaused.body.record.amendments[1].changes.confirmedCause).toEqual({ before: cause, after: other2.id })
    }
  })

  it('starts from symptoms alone and offers the matching procedures\' causes', async () => {
    const tech = await signedIn(DEMO.technician)
    const record = await start(tech, { deviceType: 'rotary-led-dimmer-trailing-edge', symptoms: ['does-not-dim'] })
    expect(record.procedure).toBeNull()
    expect(record.guide).toBeNull()
    expect(record.candidates.map((c: { procedureSlug: string }) => c.procedureSlug)).toContain(SLUG)
    const missing = await tech.post('/api/records', { symptoms: [] })
    expect(missing.status).toBe(400)
  })

  it('lets a technician flag a step; the author and the editors get mail', async () => {
    const tech = await signedIn(DEMO.technician)
    const record = await start(tech)
    const stepKey = record.guide.content.steps[0].key
    const res = await tech.post('/api/step-flags', { revisionId: record.revision.id, stepKey, kind: 'unclear', note: 'Which leg is the drain?' })
    expect(res.status).toBe(201)
    await waitForMail(m => m.to.includes(DEMO.author) && m.text.includes('Which leg is the drain?'))
    await waitForMail(m => m.to.includes(DEMO.editor) && m.text.includes('Which leg is the drain?'))
    const flags = (await (await signedIn(DEMO.author)).get(`/api/revisions/${record.revision.id}/flags`)).body.data
    expect(flags[0]).toMatchObject({ stepKey, kind: 'unclear', resolved: false })
  })
})

describe('record lists and export', () => {
  it('filters on the server and exports the same rows as CSV', async () => {
    const tech = await signedIn(DEMO.technician)
    const filter = 'deviceType=usb-c-charger-30w&outcome=repaired'
    const first = await tech.get(`/api/records?${filter}&pageSize=200&sort=startedAt`)
    expect(first.status).toBe(200)
    expect(first.body.meta.total).toBeGreaterThan(5)
    for (const r of first.body.data) expect(r).toMatchObject({ deviceType: { slug: 'usb-c-charger-30w' }, outcome: 'repaired' })
    const csv = await fetch(`${tech.baseUrl}/api/records/export.csv?${filter}`, { headers: { cookie: tech.cookie } })
    expect(csv.headers.get('content-type')).toMatch(/text\/csv/)
    const rows = parse(await csv.text(), { columns: true }) as Array<Record<string, string>>
    expect(rows.map(r => Number(r.id)).sort((a, b) => a - b)).toEqual(first.body.data.map((r: { id: number }) => r.id).sort((a: number, b: number) => a - b))
    const byId = new Map(first.body.data.map((r: { id: number }) => [r.id, r]))
    for (const row of rows) {
      const api = byId.get(Number(row.id)) as { minutes: number, confirmedCause: { id: string } | null, technician: { name: string } }
      expect(Number(row.minutes)).toBe(api.minutes)
      expect(row.confirmed_cause).toBe(api.confirmedCause?.id ?? '')
      expect(row.technician).toBe(api.technician.name)
    }
  })

  it('answers bad filters with 400 naming the field', async () => {
    const res = await (await signedIn(DEMO.technician)).get('/api/records?outcome=fixed&from=yesterday')
    expect(res.status).toBe(400)
    expect(Object.keys(res.body.data.fields)).toEqual(expect.arrayContaining(['outcome', 'from']))
  })
})

describe('evidence', () => {
  it('matches a hand count over the seeded records', async () => {
    testDb()
    const proc = await Procedure.findOne({ where: { slug: SLUG } })
    const rev = await Revision.findByPk(proc!.publishedRevisionId!)
    const all = await RepairRecord.findAll({ where: { status: 'closed', deviceType: rev!.content.deviceType } })
    const confirmed = all.filter(r => r.causeKey)
    const res = await (await signedIn(DEMO.technician)).get(`/api/evidence?procedure=${SLUG}`)
    expect(res.status).toBe(200)
    expect(res.body.totalRecords).toBe(confirmed.length)
    for (const cause of rev!.content.causes) {
      const hand = confirmed.filter(r => r.causeProcedureId === proc!.id && r.causeKey === cause.key).length
      const row = res.body.data.find((d: { causeKey: string }) => d.causeKey === cause.key)
      expect(row, cause.key).toMatchObject({ confirmed: hand, of: confirmed.length, support: `confirmed in ${hand} of ${confirmed.length} records` })
    }
    const total = res.body.data.reduce((s: number, d: { posterior: number }) => s + d.posterior, 0)
    expect(total).toBeCloseTo(1, 9)
  })

  it('evaluates a typed reading against a spec (IEC 60062 code 4K7, ±5 % window)', async () => {
    const tech = await signedIn(DEMO.technician)
    const ok = await tech.post('/api/readings/evaluate', { value: '4K7', spec: { quantity: 'resistance', unit: 'kΩ', nominal: 4.7, tolerancePct: 5 } })
    expect(ok.body).toMatchObject({ verdict: 'in_range', parsed: { display: '4.7 kΩ', open: false } })
    const open = await tech.post('/api/readings/evaluate', { value: 'OL', spec: { quantity: 'continuity', unit: 'Ω', max: 1 } })
    expect(open.body).toMatchObject({ verdict: 'open', pass: false })
    const bad = await tech.post('/api/readings/evaluate', { value: '4x7 furlongs', spec: { quantity: 'resistance', unit: 'Ω', min: 1 } })
    expect(bad.status).toBe(422)
    expect(bad.body.message).toMatch(/4x7/)
  })
})
