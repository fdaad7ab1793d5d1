import { parse } from 'csv-parse/sync'
import sharp from 'sharp'
import { describe, expect, it } from 'vitest'
import { Procedure, RepairRecord, Revision } from '../../server/db'
import { ApiClient, DEMO, signedIn } from '../helpers/api'
import { makeContent } from '../helpers/content'
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
    type Step = { key: string, measurement?: { min?: number, max?: number, unit: string }, verdicts?: { low?: { causes?: string[] } } }
    const step = (record.guide.content.steps as Step[]).find(s => s.measurement?.min !== undefined && s.measurement.min > 0 && s.verdicts?.low?.causes?.length)!
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

describe('what may be linked to a record (OWASP WSTG-ATHZ-04)', () => {
  async function upload(client: ApiClient) {
    const fd = new FormData()
    fd.append('file', new Blob([await sharp({ create: { width: 64, height: 48, channels: 3, background: { r: 9, g: 9, b: 9 } } }).jpeg().toBuffer()], { type: 'image/jpeg' }), 'p.jpg')
    const res = await client.post('/api/uploads', fd)
    expect(res.status).toBe(201)
    return res.body.id as number
  }

  it('takes only photos the technician uploaded: not a colleague\'s, not a draft\'s step image', async () => {
    const ade = await new ApiClient().login((await makeUser()).email, FACTORY_PASSWORD)
    const mika = await new ApiClient().login((await makeUser()).email, FACTORY_PASSWORD)
    const author = await signedIn(DEMO.author)
    const mine = await upload(ade)
    const colleagues = await upload(mika)
    const draftImage = await upload(author)
    const content = makeContent()
    content.steps[0]!.imageIds = [draftImage]
    expect((await author.post('/api/procedures', { content })).status).toBe(201)
    const record = await start(ade)
    for (const foreign of [colleagues, draftImage, 999_999]) {
      const res = await ade.patch(`/api/records/${record.id}`, { version: record.version, photoIds: [mine, foreign] })
      expect(res.status, `photo ${foreign}`).toBe(422)
      expect(res.body.data.fields).toEqual({ 'photoIds.1': 'not a photo you uploaded' })
    }
    const close = await ade.post(`/api/records/${record.id}/close`, { confirmedCause: null, outcome: 'no_fault_found', minutes: 5, photoIds: [colleagues] })
    expect(close.status).toBe(422)
    const saved = await ade.patch(`/api/records/${record.id}`, { version: record.version, photoIds: [mine] })
    expect(saved.status).toBe(200)
    expect(saved.body.record.photos.map((p: { id: number }) => p.id)).toEqual([mine])
    // An editor saving the record keeps the technician's photos; a photo of their own may join them.
    const editor = await signedIn(DEMO.editor)
    const editorsPhoto = await upload(editor)
    const byEditor = await editor.patch(`/api/records/${record.id}`, { version: saved.body.record.version, photoIds: [mine, editorsPhoto] })
    expect(byEditor.status).toBe(200)
    const closed = await ade.post(`/api/records/${record.id}/close`, { confirmedCause: null, outcome: 'no_fault_found', minutes: 5, photoIds: [mine] })
    expect(closed.status).toBe(200)
    const amend = await ade.post(`/api/records/${record.id}/amendments`, { reason: 'Add the other photo', changes: { photoIds: [mine, colleagues] } })
    expect(amend.status).toBe(422)
  })

  it('keeps what a save does not name: a step saved with only "done" keeps its reading and note', async () => {
    const tech = await signedIn(DEMO.technician)
    const record = await start(tech)
    const key = record.guide.content.steps[0].key
    const first = await tech.patch(`/api/records/${record.id}`, { version: record.version, steps: { [key]: { value: '0.58 V', note: 'both legs' } } })
    expect(first.status).toBe(200)
    const second = await tech.patch(`/api/records/${record.id}`, { version: first.body.record.version, steps: { [key]: { done: true } } })
    expect(second.body.record.steps[key]).toMatchObject({ value: '0.58 V', note: 'both legs', done: true })
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
      const api = byId.get(Number(row.id)) as { minutes: number, confirmedCause: { id: string, label: string } | null, technician: { name: string } }
      expect(Number(row.minutes)).toBe(api.minutes)
      expect(row.confirmed_cause).toBe(api.confirmedCause?.label ?? '')
      expect(`${row.cause_procedure}:${row.cause_key}`).toBe(api.confirmedCause?.id ?? ':')
      expect(row.technician).toBe(api.technician.name)
    }
  })

  it('names the confirmed cause in the export, its ids in their own columns, never the bare key', async () => {
    const tech = await signedIn(DEMO.technician)
    const rows = parse(await (await fetch(`${tech.baseUrl}/api/records/export.csv?status=closed&outcome=repaired`, { headers: { cookie: tech.cookie } })).text(), { columns: true }) as Array<Record<string, string>>
    expect(rows.length).toBeGreaterThan(10)
    testDb()
    const named = rows.filter(r => r.cause_key)
    expect(named.length).toBeGreaterThan(10)
    const procs = new Map((await Procedure.findAll()).map(p => [p.slug, p]))
    for (const row of named.slice(0, 40)) {
      const live = await Revision.findByPk(procs.get(row.cause_procedure)!.publishedRevisionId!)
      const record = await RepairRecord.findByPk(Number(row.id))
      const pinned = record!.revisionId && record!.procedureId === procs.get(row.cause_procedure)!.id ? await Revision.findByPk(record!.revisionId) : null
      const name = (pinned ?? live)!.content.causes.find(c => c.key === row.cause_key)?.name
      expect(row.confirmed_cause, `record ${row.id}`).toBe(name)
      expect(row.confirmed_cause).not.toContain(':')
    }
  })

  // Enough records for the export to read more than one page of 500: open ones (no close date,
  // no minutes, which MariaDB sorts first ascending and last descending) with many equal values.
  let extra: Promise<unknown> | undefined
  const manyRecords = () => (extra ??= (async () => {
    testDb()
    const tech = await makeUser()
    const day = Date.UTC(2025, 0, 1)
    await RepairRecord.bulkCreate(Array.from({ length: 520 }, (_, i) => ({
      deviceType: 'usb-c-charger-30w', symptoms: [], technicianId: tech.id, procedureId: null, revisionId: null, causeProcedureId: null, causeKey: null,
      outcome: null, minutes: i % 3 ? null : i % 7, replacementCostCents: null, closedAt: null, startedAt: new Date(day + (i % 40) * 3_600_000),
    })))
  })())

  it.each(['-startedAt', 'minutes', '-minutes', 'closedAt', '-closedAt'])('exports in the list\'s order (sort=%s), every row once, across the export\'s pages', async (sort) => {
    await manyRecords()
    const tech = await signedIn(DEMO.technician)
    const listed: number[] = []
    for (let page = 1; ; page++) {
      const res = await tech.get(`/api/records?sort=${sort}&pageSize=200&page=${page}`)
      listed.push(...res.body.data.map((r: { id: number }) => r.id))
      if (page >= res.body.meta.pages) break
    }
    expect(listed.length, 'more rows than one page of the export (500)').toBeGreaterThan(500)
    const rows = parse(await (await fetch(`${tech.baseUrl}/api/records/export.csv?sort=${sort}`, { headers: { cookie: tech.cookie } })).text(), { columns: true }) as Array<Record<string, string>>
    expect(rows.map(r => Number(r.id))).toEqual(listed)
  })

  it('neutralises formulas in every text cell of the export (OWASP CSV injection guidance)', async () => {
    const sly = await makeUser({ name: '=HYPERLINK("http://evil.example","open me")' })
    const client = await new ApiClient().login(sly.email, FACTORY_PASSWORD)
    const record = await start(client, { procedureSlug: SLUG, unit: { model: '@SUM(1+9)*cmd|\' /C calc\'!A0', serial: '+cmd|\' /C notepad\'!A0', jobRef: '-2+3' } })
    await client.patch(`/api/records/${record.id}`, { version: record.version, notes: '=1+1' })
    const csv = await (await fetch(`${client.baseUrl}/api/records/export.csv?technician=${sly.id}`, { headers: { cookie: client.cookie } })).text()
    const [row] = parse(csv, { columns: true }) as Array<Record<string, string>>
    expect(row).toMatchObject({
      model: '\'@SUM(1+9)*cmd|\' /C calc\'!A0',
      serial: '\'+cmd|\' /C notepad\'!A0',
      job_ref: '\'-2+3',
      technician: '\'=HYPERLINK("http://evil.example","open me")',
    })
    for (const cell of Object.values(row!)) expect(cell, 'no cell starts a formula').not.toMatch(/^[=+\-@\t\r]/)
  })

  it('finds records by words of the unit\'s model, serial or job reference', async () => {
    const tech = await signedIn(DEMO.technician)
    const tag = Math.random().toString(36).slice(2, 8).toUpperCase()
    const a = await start(tech, { procedureSlug: SLUG, unit: { model: `Lumen ${tag} mk2`, serial: 'SN-1', jobRef: 'J-1' } })
    const b = await start(tech, { procedureSlug: SLUG, unit: { model: 'Other', serial: `ZX${tag}9`, jobRef: 'J-2' } })
    const c = await start(tech, { procedureSlug: SLUG, unit: { model: 'Other', serial: 'SN-3', jobRef: `HL-${tag}` } })
    const found = async (q: string) => (await tech.get(`/api/records?q=${encodeURIComponent(q)}&pageSize=50`)).body.data.map((r: { id: number }) => r.id).sort()
    expect(await found(tag)).toEqual([a.id, b.id, c.id].sort())
    expect(await found(tag.toLowerCase()), 'case does not matter').toEqual([a.id, b.id, c.id].sort())
    expect(await found(`lumen ${tag}`), 'every word must match').toEqual([a.id])
    expect(await found(`HL-${tag}`)).toEqual([c.id])
    expect(await found('%'), 'a wildcard is taken literally').toEqual([])
    const csv = await (await fetch(`${tech.baseUrl}/api/records/export.csv?q=${tag}`, { headers: { cookie: tech.cookie } })).text()
    expect((parse(csv, { columns: true }) as unknown[]).length).toBe(3)
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
      expect(row, cause.key).toMatchObject({ confirmed: hand, of: confirmed.length, support: `found in ${hand} of ${confirmed.length} closed jobs` })
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
