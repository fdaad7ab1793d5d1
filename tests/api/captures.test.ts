import { readdirSync, statSync } from 'node:fs'
import { join } from 'node:path'
import { describe, expect, it } from 'vitest'
import { Attachment, Capture } from '../../server/db'
import { captureToCsv, synthesiseCapture, type SynthOptions } from '../../shared/utils/waveform/synth'
import { ApiClient, DEMO, signedIn } from '../helpers/api'
import { testDb } from '../helpers/db'
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
    ['fewer than two mains cycles', csv({ cycles: 1.5 }), 'TOO_FEW_CYCLES', /two/],
    ['a sample rate too low for the analysis', csv({ sampleRateHz: 500, cycles: 10 }), 'SAMPLE_RATE_TOO_LOW', /S\/s/],
    ['too many unreadable rows', lines.map((l, k) => (k > 0 && k % 4 === 0 ? 'n/a,n/a' : l)).join('\n'), 'TOO_MANY_BAD_ROWS', /could not be read/],
    ['a waveform outside the mains range', csv({ frequencyHz: 400, sampleRateHz: 100_000, cycles: 20 }), 'NO_MAINS_FREQUENCY', /mains/],
    ['a binary file', Buffer.from([0x89, 0x50, 0x4E, 0x47, 0x0D, 0x0A, 0x1A, 0x0A, 0, 0, 0, 13, 0x49, 0x48, 0x44, 0x52]), '', /./],
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
