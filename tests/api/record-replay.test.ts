import { describe, expect, it } from 'vitest'
import { DEMO, signedIn } from '../helpers/api'

// A phone whose connection drops mid-save does not know whether its save arrived, so it sends it
// again on the same version. The record must hold the values once, under one new version, and a
// different save on that stale version must still be refused with both versions (409).
describe('a record save sent twice', () => {
  it('is stored once; a different save on the same stale version is still a conflict', async () => {
    const tech = await signedIn(DEMO.technician)
    const started = await tech.post('/api/records', { procedureSlug: 'vr240-stuck-at-full', unit: { model: 'VR-240 rev C', serial: 'R-1', jobRef: 'REPLAY-1' } })
    expect(started.status, JSON.stringify(started.body)).toBe(201)
    const record = started.body.record
    const step = (record.guide.content.steps as Array<{ key: string }>)[0]!.key
    const body = { version: record.version, notes: 'bridge rectifier warm', steps: { [step]: { value: '0.52 V', note: '', done: true } } }

    const first = await tech.patch(`/api/records/${record.id}`, body)
    expect(first.status).toBe(200)
    expect(first.body.record.version).toBe(record.version + 1)

    const again = await tech.patch(`/api/records/${record.id}`, body)
    expect(again.status, JSON.stringify(again.body)).toBe(200)
    expect(again.body.record.version).toBe(record.version + 1)
    expect(again.body.record.notes).toBe('bridge rectifier warm')
    expect(again.body.record.steps[step].value).toBe('0.52 V')

    const other = await tech.patch(`/api/records/${record.id}`, { ...body, notes: 'typed in another tab' })
    expect(other.status).toBe(409)
    expect(other.body.data.current.notes).toBe('bridge rectifier warm')
    expect((await tech.get(`/api/records/${record.id}`)).body.record.version).toBe(record.version + 1)
  })
})
