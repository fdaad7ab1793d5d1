import { describe, expect, it } from 'vitest'
import { ApiClient, DEMO, signedIn } from '../helpers/api'
import { FACTORY_PASSWORD, makeUser } from '../helpers/db'

// A record started from device type and symptoms alone takes a live procedure later: the record
// then walks that procedure's steps, pinned to its live revision. Only who may change the record
// may choose, only a live procedure of the record's device type is taken, and only once.

const DIMMER = 'rotary-led-dimmer-trailing-edge'

async function liveSlug(client: ApiClient, deviceType: string, symptom?: string): Promise<string> {
  const q = new URLSearchParams({ deviceType, ...(symptom ? { symptom } : {}) })
  const res = await client.get(`/api/procedures?${q}`)
  expect(res.status).toBe(200)
  return res.body.data[0].slug as string
}

async function symptomRecord(client: ApiClient): Promise<number> {
  const res = await client.post('/api/records', { deviceType: DIMMER, symptoms: ['does-not-dim'], unit: { model: 'VR-240', serial: '', jobRef: '' } })
  expect(res.status).toBe(201)
  expect(res.body.record.guide).toBeNull()
  return res.body.record.id as number
}

describe('choosing a procedure for a record started from symptoms', () => {
  it('gives the record the live revision and its steps', async () => {
    const tech = await signedIn(DEMO.technician)
    const id = await symptomRecord(tech)
    const slug = await liveSlug(tech, DIMMER, 'does-not-dim')
    const res = await tech.post(`/api/records/${id}/procedure`, { procedure: slug })
    expect(res.status).toBe(200)
    expect(res.body.record.procedure.slug).toBe(slug)
    expect(res.body.record.guide.content.steps.length).toBeGreaterThan(0)
    const listed = (await tech.get(`/api/procedures?deviceType=${DIMMER}&pageSize=100`)).body.data.find((p: { slug: string }) => p.slug === slug)
    expect(res.body.record.revision.number).toBe(listed.revisionNumber)
    // Read back: the choice was stored, not only answered.
    const again = await tech.get(`/api/records/${id}`)
    expect(again.body.record.procedure.slug).toBe(slug)
    expect(again.body.record.guide.content.steps.map((s: { key: string }) => s.key)).toEqual(res.body.record.guide.content.steps.map((s: { key: string }) => s.key))
  })

  it('answers 409 when the record already follows a procedure', async () => {
    const tech = await signedIn(DEMO.technician)
    const id = await symptomRecord(tech)
    const slug = await liveSlug(tech, DIMMER, 'does-not-dim')
    expect((await tech.post(`/api/records/${id}/procedure`, { procedure: slug })).status).toBe(200)
    const twice = await tech.post(`/api/records/${id}/procedure`, { procedure: slug })
    expect(twice.status).toBe(409)
  })

  it('lets only the record\'s technician or an editor choose', async () => {
    const tech = await signedIn(DEMO.technician)
    const id = await symptomRecord(tech)
    const slug = await liveSlug(tech, DIMMER, 'does-not-dim')
    const colleague = await new ApiClient().login((await makeUser()).email, FACTORY_PASSWORD)
    const refused = await colleague.post(`/api/records/${id}/procedure`, { procedure: slug })
    expect(refused.status).toBe(403)
    expect((await tech.get(`/api/records/${id}`)).body.record.procedure).toBeNull()
    const editor = await signedIn(DEMO.editor)
    expect((await editor.post(`/api/records/${id}/procedure`, { procedure: slug })).status).toBe(200)
  })

  it.each([
    // Malformed input is refused by the schema (400); a well-formed name of no live procedure by the rule (422).
    { name: 'no procedure named', body: {}, status: 400, field: 'procedure' },
    { name: 'an empty name', body: { procedure: '' }, status: 400, field: 'procedure' },
    { name: 'a number instead of a name', body: { procedure: 42 }, status: 400, field: 'procedure' },
    { name: 'an unknown procedure', body: { procedure: 'no-such-procedure-here' }, status: 422, field: 'procedure' },
  ])('refuses $name with $status naming the field', async ({ body, status, field }) => {
    const tech = await signedIn(DEMO.technician)
    const id = await symptomRecord(tech)
    const res = await tech.post(`/api/records/${id}/procedure`, body)
    expect(res.status).toBe(status)
    expect(Object.keys(res.body.data?.fields ?? {})).toContain(field)
    expect((await tech.get(`/api/records/${id}`)).body.record.procedure).toBeNull()
  })

  it('refuses a procedure written for another device type', async () => {
    const tech = await signedIn(DEMO.technician)
    const id = await symptomRecord(tech)
    const other = await liveSlug(tech, 'usb-c-charger-30w')
    const res = await tech.post(`/api/records/${id}/procedure`, { procedure: other })
    expect(res.status).toBe(422)
    expect(res.body.data.fields.procedure).toMatch(/device type/)
  })

  it('answers 404 for an unknown record and 409 for a closed one', async () => {
    const tech = await signedIn(DEMO.technician)
    const slug = await liveSlug(tech, DIMMER, 'does-not-dim')
    expect((await tech.post('/api/records/99999999/procedure', { procedure: slug })).status).toBe(404)
    const id = await symptomRecord(tech)
    const closed = await tech.post(`/api/records/${id}/close`, { confirmedCause: null, outcome: 'no_fault_found', parts: [], minutes: 5, replacementCost: null, photoIds: [] })
    expect(closed.status).toBe(200)
    expect((await tech.post(`/api/records/${id}/procedure`, { procedure: slug })).status).toBe(409)
  })
})
