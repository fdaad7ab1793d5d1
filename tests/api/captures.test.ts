import { readdirSync, statSync } from 'node:fs'
import { join } from 'node:path'
import fc from 'fast-check'
import { describe, expect, it } from 'vitest'
import { Attachment, Capture } from '../../server/db'
import { captureToCsv, synthesiseCapture, type SynthOptions } from '../../shared/utils/waveform/synth'
import { ApiClient, DEMO, signedIn } from '../helpers/api'
import { FACTORY_PASSWORD, makeUser, testDb } from '../helpers/db'
import { arbitraryUpload, writeExport } from '../helpers/exports'
import { objectStoreFiles } from '../../scripts/lib/stack'
import { services } from '../helpers/stack'

// Synthetic exports (invented test data) drawn with the same generator the unit tests check
// against closed-form values; the upload must keep nothing of a file it refuses.

function form(text: string | Buffer, name = 'capture.csv', extra: Record<string, string> = {}) {
  const fd = new FormData()
  fd.append('file', new Blob([text], { type: 'text/csv' }), name)
  for (const [k, v] of Object.entries(extra)) fd.append(k, v)
  return fd
}

const csv = (options: SynthOptions, csvOptions: Parameters<typeof captureToCsv>[1] = {}) =>
  captureToCsv(synthesiseCapture({ frequencyHz: 50, sampleRateHz: 20_000, cycles: 10, vrms: 230, ...options }), csvOptions)

function filesUnder(dir: string): number {
  let n = 0
  for (const entry of readdirSync(dir)) {
    const path = join(dir, entry)
    n += statSync(path).isDirectory() ? filesUnder(path) : 1
  }
  return n
}

/** Rows and objects: what an upload could leave behind. */
async function stored() {
  testDb()
  return { captures: await Capture.count(), attachments: await Attachment.count(), objects: filesUnder(objectStoreFiles(services.profile).dir) }
}

describe('capture upload', () => {
  it('analyses a trailing-edge export and serves features, series and the raw file', async () => {
    const tech = await signedIn(DEMO.technician)
    const before = await stored()
    const res = await tech.post('/api/captures', form(csv({ cut: 'trailing_edge', conductionAngleDeg: 120, noiseVrms: 0.5, seed: 3 }, { timeUnit: 'ms', withUnitRow: true }), 'dimmer.csv', { label: 'Bench dimmer at 2/3' }))
    expect(res.status).toBe(201)
    expect(res.body.features).toMatchObject({ cutType: 'trailing_edge', cycles: expect.any(Number) })
    expect(res.body.features.frequencyHz).toBeCloseTo(50, 1)
    const after = await stored()
    expect(after.captures).toBe(before.captures + 1)
    expect(after.objects).toBeGreaterThan(before.objects)
    const detail = await tech.get(`/api/captures/${res.body.id}`)
    expect(detail.status).toBe(200)
    expect(detail.body.label).toBe('Bench dimmer at 2/3')
    expect(detail.body.series.t.length).toBeGreaterThan(100)
    const raw = await fetch(`${tech.baseUrl}${detail.body.fileUrl}`, { headers: { cookie: tech.cookie } })
    expect(raw.status).toBe(200)
    expect((await raw.text()).startsWith('time,voltage')).toBe(true)
    expect((await new ApiClient().get(`/api/captures/${res.body.id}`)).status).toBe(401)
  })

  // Each refusal names the problem (code and message) and stores nothing.
  const good = csv({ cut: 'none' })
  const lines = good.trimEnd().split('\n')
  const cases: Array<[string, string | Buffer, string, RegExp]> = [
    ['an empty file', '', 'EMPTY_FILE', /empty/],
    ['text without numbers', 'time,voltage\nmorning,high\nnoon,low\nevening,high\n', 'NO_NUMERIC_COLUMNS', /numeric/],
    ['a single numeric column without a sample interval', `voltage\n${lines.slice(1).map(l => l.split(',')[1]).join('\n')}\n`, 'NO_NUMERIC_COLUMNS', /column/],
    ['time that goes backwards', [...lines.slice(0, 500), lines[300]!, ...lines.slice(500)].join('\n'), 'TIME_NOT_INCREASING', /time does not increase/],
    ['a header and a single row', 'time,voltage\n0,1\n', 'TOO_FEW_CYCLES', /only 1 sample/],
    ['a first row of words and one row of numbers', 'Bench,capture\n0,1\n', 'TOO_FEW_CYCLES', /only 1 sample/],
    ['fewer than two mains cycles', csv({ cycles: 1.5 }), 'TOO_FEW_CYCLES', /two/],
    ['a sample rate too low for the analysis', csv({ sampleRateHz: 500, cycles: 10 }), 'SAMPLE_RATE_TOO_LOW', /S\/s/],
    ['too many unreadable rows', lines.map((l, k) => (k > 0 && k % 4 === 0 ? 'n/a,n/a' : l)).join('\n'), 'TOO_MANY_BAD_ROWS', /left out: \d+ with a cell that is not a number/],
    ['a waveform outside the mains range', csv({ frequencyHz: 400, sampleRateHz: 100_000, cycles: 20 }), 'NO_MAINS_FREQUENCY', /mains/],
    ['a binary file', Buffer.from([0x89, 0x50, 0x4E, 0x47, 0x0D, 0x0A, 0x1A, 0x0A, 0, 0, 0, 13, 0x49, 0x48, 0x44, 0x52]), 'NOT_TEXT', /not a text export/],
  ]
  it.each(cases)('refuses %s with 422 and stores nothing', async (_, body, code, message) => {
    const tech = await signedIn(DEMO.technician)
    const before = await stored()
    const res = await tech.post('/api/captures', form(body))
    expect(res.status, JSON.stringify(res.body)).toBe(422)
    if (code) expect(res.body.data.code).toBe(code)
    expect(res.body.message).toMatch(message)
    expect(res.body.data.fields.file).toBeTruthy()
    expect(await stored()).toEqual(before)
  })

  it('refuses a file over 50 MB with 413 and stores nothing', async () => {
    const before = await stored()
    const res = await (await signedIn(DEMO.technician)).post('/api/captures', form(Buffer.alloc(51 * 1024 * 1024, 0x31)))
    expect(res.status).toBe(413)
    expect(await stored()).toEqual(before)
  })

  it('refuses a request without a file, or with an unknown record, naming the field', async () => {
    const tech = await signedIn(DEMO.technician)
    const before = await stored()
    const none = new FormData()
    none.append('label', 'no file')
    const missing = await tech.post('/api/captures', none)
    expect(missing.status).toBe(400)
    expect(missing.body.data.fields).toHaveProperty('file')
    const unknown = await tech.post('/api/captures', form(good, 'x.csv', { recordId: '999999999' }))
    expect(unknown.status).toBe(422)
    expect(unknown.body.data.fields).toHaveProperty('recordId')
    expect(await stored()).toEqual(before)
  })

  it('answers 503 and leaves no row while the object store is down', async () => {
    const tech = await signedIn(DEMO.technician)
    const before = await stored()
    await services.stopObjectStore()
    try {
      const res = await tech.post('/api/captures', form(good))
      expect(res.status).toBe(503)
      expect(res.body.message).toMatch(/object store/)
      testDb()
      expect(await Capture.count()).toBe(before.captures)
      expect(await Attachment.count()).toBe(before.attachments)
    }
    finally {
      await services.startObjectStore()
    }
    expect(filesUnder(objectStoreFiles(services.profile).dir)).toBe(before.objects)
  })
})

// A trailing-edge dimmer at 117° conduction, 230 V into 100 Ω, its edges midway between samples
// (117° = 130 samples of 0.9° at 20 kS/s, started half a sample late): Vrms/Vpk =
// √[(β − ½ sin 2β)/(2π)] (computed in closed form; equals Rashid's leading-edge form at α = 180° − β).
const BETA = (117 * Math.PI) / 180
const DIMMER = synthesiseCapture({ vrms: 230, frequencyHz: 50, sampleRateHz: 20_000, cycles: 10, cut: 'trailing_edge', conductionAngleDeg: 117, load: { resistanceOhm: 100 }, startPhaseDeg: 0.45 })
const DIMMER_VRMS = 230 * Math.SQRT2 * Math.sqrt((BETA - 0.5 * Math.sin(2 * BETA)) / (2 * Math.PI))

async function inProgressRecord(client: ApiClient, procedureSlug = 'vr240-half-cycle-flicker') {
  const res = await client.post('/api/records', { procedureSlug, unit: { model: 'VR-240 rev C', serial: 'CAP-1', jobRef: 'CAP-TEST' } })
  expect(res.status, JSON.stringify(res.body)).toBe(201)
  return res.body.record as { id: number, version: number, guide: { content: { steps: Array<{ key: string }> } }, candidates: Array<{ id: string }> }
}

describe('capture exports over HTTP', () => {
  it('reads mV with an over-range first cell as volts, and returns the rows it left out', async () => {
    const tech = await signedIn(DEMO.technician)
    const text = writeExport(DIMMER, { header: ['Time (s)', 'CH1 (mV)', 'CH2 (A)'], voltageScale: 1e3, edit: (k, c) => (k === 0 ? [c[0]!, '∞', c[2]!] : c) })
    const res = await tech.post('/api/captures', form(text, 'dimmer-mv.csv'))
    expect(res.status, JSON.stringify(res.body)).toBe(201)
    expect(Math.abs(res.body.features.vrms / DIMMER_VRMS - 1)).toBeLessThan(1e-3)
    expect(res.body.file).toMatchObject({ droppedRows: 1, dataRows: DIMMER.t.length, units: { voltage: 'mV', current: 'A' }, skipped: { overRange: 1, ranges: [[2, 2]], columns: ['CH1'] } })
    expect(res.body.warnings[0]).toMatch(/^1 of 4000 data rows left out: 1 with a cell over range .* at row 2: the figures leave those rows out$/)
    const detail = await tech.get(`/api/captures/${res.body.id}`)
    expect(detail.body.analysis.file.droppedRows).toBe(1)
  })

  it('asks which columns to read when the file leaves it open, storing nothing, then analyses the choice', async () => {
    const tech = await signedIn(DEMO.technician)
    const text = writeExport(DIMMER, { header: ['Time (s)', 'CH1 (V)', 'CH2 (V)', 'MATH (W)'], withCurrent: false, extra: k => [String(230 * Math.SQRT2 * Math.sin(k)), String(k)] })
    const before = await stored()
    const asked = await tech.post('/api/captures', form(text, 'two-channels.csv'))
    expect(asked.status).toBe(422)
    expect(asked.body.data.code).toBe('AMBIGUOUS_COLUMNS')
    expect(asked.body.data.fields).toHaveProperty('voltageColumn')
    expect(asked.body.data.columns.map((c: { name: string, asVoltage: boolean, asCurrent: boolean }) => [c.name, c.asVoltage, c.asCurrent])).toEqual([
      ['Time', false, false], ['CH1', true, false], ['CH2', true, false], ['MATH', false, false],
    ])
    expect(await stored()).toEqual(before)
    const wrong = await tech.post('/api/captures', form(text, 'two-channels.csv', { voltageColumn: '3', currentColumn: 'none' }))
    expect(wrong.status).toBe(422)
    expect(wrong.body.data.fields).toHaveProperty('voltageColumn')
    const chosen = await tech.post('/api/captures', form(text, 'two-channels.csv', { voltageColumn: '1', currentColumn: 'none' }))
    expect(chosen.status, JSON.stringify(chosen.body)).toBe(201)
    expect(chosen.body.features.cutType).toBe('trailing_edge')
    expect(Math.abs(chosen.body.features.vrms / DIMMER_VRMS - 1)).toBeLessThan(1e-3)
    expect(chosen.body.features.current).toBeUndefined()
  })

  it('answers any bytes with 201 or a 4xx, never a 5xx, and stores nothing on a 4xx (property, fast-check)', async () => {
    const tech = await signedIn(DEMO.technician)
    const small = writeExport(synthesiseCapture({ sampleRateHz: 5_000, cycles: 3, cut: 'leading_edge', firingAngleDeg: 60, load: { resistanceOhm: 100 } }), { header: ['Time (s)', 'Voltage (V)', 'Current (A)'], digits: 6 })
    await fc.assert(fc.asyncProperty(arbitraryUpload(fc, small), async (bytes) => {
      const before = await stored()
      const res = await tech.post('/api/captures', form(bytes, 'random.csv'))
      if (res.status !== 201 && !(res.status >= 400 && res.status < 500)) throw new Error(`${res.status} ${JSON.stringify(res.body).slice(0, 300)}`)
      if (res.status !== 201) expect(await stored()).toEqual(before)
    }), { numRuns: 300, seed: 31415 })
  }, 240_000)
})

describe('captures in the job', () => {
  it('files a capture with a step of the technician\'s own record, and lists it with the record', async () => {
    const tech = await signedIn(DEMO.technician)
    const record = await inProgressRecord(tech)
    const step = record.guide.content.steps.find(s => s.key === 'capture') ?? record.guide.content.steps[0]!
    const res = await tech.post('/api/captures', form(captureToCsv(DIMMER), 'step.csv', { recordId: String(record.id), stepKey: step.key, label: 'At the step' }))
    expect(res.status, JSON.stringify(res.body)).toBe(201)
    const list = await tech.get(`/api/captures?record=${record.id}`)
    expect(list.status).toBe(200)
    expect(list.body.meta).toMatchObject({ total: 1, page: 1 })
    expect(list.body.data[0]).toMatchObject({ id: res.body.id, stepKey: step.key, stepTitle: expect.any(String), label: 'At the step', record: { id: record.id }, features: { cutType: 'trailing_edge' } })
    const unknownStep = await tech.post('/api/captures', form(captureToCsv(DIMMER), 'step.csv', { recordId: String(record.id), stepKey: 'no-such-step' }))
    expect(unknownStep.status).toBe(422)
    expect(unknownStep.body.data.fields).toHaveProperty('stepKey')
    const stepWithoutRecord = await tech.post('/api/captures', form(captureToCsv(DIMMER), 'step.csv', { stepKey: step.key }))
    expect(stepWithoutRecord.status).toBe(400)
    expect(stepWithoutRecord.body.data.fields).toHaveProperty('stepKey')
  })

  it('refuses to attach to another technician\'s record (403) or to a closed one (409), storing nothing; an editor may attach', async () => {
    const owner = await signedIn(DEMO.technician)
    const record = await inProgressRecord(owner)
    const colleague = await new ApiClient().login((await makeUser()).email, FACTORY_PASSWORD)
    const before = await stored()
    const foreign = await colleague.post('/api/captures', form(captureToCsv(DIMMER), 'x.csv', { recordId: String(record.id) }))
    expect(foreign.status).toBe(403)
    expect(foreign.body.message).toMatch(/record's technician or an editor/)
    expect(await stored()).toEqual(before)
    const editor = await signedIn(DEMO.editor)
    expect((await editor.post('/api/captures', form(captureToCsv(DIMMER), 'x.csv', { recordId: String(record.id) }))).status).toBe(201)
    const closed = await owner.post(`/api/records/${record.id}/close`, { confirmedCause: record.candidates[0]!.id, outcome: 'repaired', minutes: 20 })
    expect(closed.status, JSON.stringify(closed.body)).toBe(200)
    const late = await stored()
    const afterClose = await owner.post('/api/captures', form(captureToCsv(DIMMER), 'x.csv', { recordId: String(record.id) }))
    expect(afterClose.status).toBe(409)
    expect(await stored()).toEqual(late)
  })

  it('lists captures newest first with filters: mine, cut type, dates; refuses a malformed filter with 400', async () => {
    const colleague = await new ApiClient().login((await makeUser()).email, FACTORY_PASSWORD)
    const a = await colleague.post('/api/captures', form(captureToCsv(DIMMER), 'a.csv', { label: 'mine, trailing' }))
    const b = await colleague.post('/api/captures', form(csv({ cut: 'leading_edge', firingAngleDeg: 90 }), 'b.csv', { label: 'mine, leading' }))
    expect([a.status, b.status]).toEqual([201, 201])
    const mine = await colleague.get('/api/captures?mine=1')
    expect(mine.body.data.map((c: { id: number }) => c.id)).toEqual([b.body.id, a.body.id])
    const leading = await colleague.get('/api/captures?mine=1&cut=leading_edge')
    expect(leading.body.data.map((c: { id: number }) => c.id)).toEqual([b.body.id])
    const today = new Date().toISOString().slice(0, 10)
    expect((await colleague.get(`/api/captures?mine=1&from=${today}&to=${today}`)).body.meta.total).toBe(2)
    expect((await colleague.get('/api/captures?mine=1&to=2000-01-01')).body.meta.total).toBe(0)
    const everyone = await colleague.get('/api/captures?pageSize=1')
    expect(everyone.body.meta.total).toBeGreaterThanOrEqual(2)
    expect(everyone.body.data).toHaveLength(1)
    const bad = await colleague.get('/api/captures?cut=sideways')
    expect(bad.status).toBe(400)
    expect(bad.body.data.fields).toHaveProperty('cut')
  })

  it('lists a procedure\'s captures: its reference signatures and its records\' captures', async () => {
    const tech = await signedIn(DEMO.technician)
    const list = await tech.get('/api/captures?procedure=vr240-half-cycle-flicker&pageSize=100')
    expect(list.status).toBe(200)
    // The demo library keeps a fault and a good reference for this procedure.
    expect(list.body.meta.total).toBeGreaterThanOrEqual(2)
    expect((await tech.get('/api/captures?procedure=no-such-procedure')).body).toMatchObject({ data: [], meta: { total: 0 } })
  })

  it('groups matches per procedure, nearest reference first, each procedure once', async () => {
    const tech = await signedIn(DEMO.technician)
    const res = await tech.post('/api/captures', form(captureToCsv(DIMMER), 'match.csv'))
    const matches = await tech.get(`/api/captures/${res.body.id}/matches`)
    expect(matches.status).toBe(200)
    const groups = matches.body.data as Array<{ procedure: { slug: string }, similarity: number, matches: Array<{ similarity: number, reference: { procedure: { slug: string } } }> }>
    const slugs = groups.map(g => g.procedure.slug)
    expect(new Set(slugs).size).toBe(slugs.length)
    for (const g of groups) {
      expect(g.matches.every(m => m.reference.procedure.slug === g.procedure.slug)).toBe(true)
      expect(g.similarity).toBe(g.matches[0]!.similarity)
      for (let k = 1; k < g.matches.length; k++) expect(g.matches[k]!.similarity).toBeLessThanOrEqual(g.matches[k - 1]!.similarity)
    }
    for (let k = 1; k < groups.length; k++) expect(groups[k]!.similarity).toBeLessThanOrEqual(groups[k - 1]!.similarity)
    // The demo library keeps two references of vr240-stuck-at-full: they come as one group.
    expect(groups.find(g => g.procedure.slug === 'vr240-stuck-at-full')!.matches.length).toBeGreaterThanOrEqual(2)
  })
})
