import { randomBytes } from 'node:crypto'
import sharp from 'sharp'
import { describe, expect, it } from 'vitest'
import { Procedure, Revision } from '../../server/db'
import { ApiClient, DEMO, signedIn } from '../helpers/api'
import { makeContent } from '../helpers/content'
import { FACTORY_PASSWORD, makeUser, testDb } from '../helpers/db'
import { waitForMail } from '../helpers/stack'

async function newDraft(author: ApiClient, content = makeContent()) {
  const res = await author.post('/api/procedures', { content })
  expect(res.status, JSON.stringify(res.body)).toBe(201)
  return res.body as { procedure: { id: number, slug: string }, revision: { id: number, version: number } }
}

describe('revision states', () => {
  it('walks every legal transition and refuses the illegal ones with 409 naming the state', async () => {
    const author = await signedIn(DEMO.author)
    const editor = await signedIn(DEMO.editor)
    const { procedure, revision } = await newDraft(author)

    // draft: not reviewable, not publishable
    expect((await editor.post(`/api/revisions/${revision.id}/approve`)).status).toBe(409)
    const sub = await author.post(`/api/revisions/${revision.id}/submit`)
    expect(sub.body.revision).toEqual({ id: revision.id, number: 1, state: 'in_review' })
    // in review: frozen
    const again = await author.post(`/api/revisions/${revision.id}/submit`)
    expect(again.status).toBe(409)
    expect(again.body.message).toMatch(/in_review/)
    expect((await author.put(`/api/revisions/${revision.id}`, { version: 1, content: makeContent() })).status).toBe(409)
    // four eyes
    expect((await author.post(`/api/revisions/${revision.id}/approve`)).status).toBe(403)
    // approve
    const ok = await editor.post(`/api/revisions/${revision.id}/approve`)
    expect(ok.body.revision.state).toBe('published')
    expect((await editor.post(`/api/revisions/${revision.id}/approve`)).status).toBe(409)
    expect((await editor.post(`/api/revisions/${revision.id}/reject`, { comment: 'too late' })).status).toBe(409)
    const tech = await signedIn(DEMO.technician)
    expect((await tech.get(`/api/procedures/${procedure.slug}`)).body.revision.number).toBe(1)

    // second revision: sent back, needs a comment
    const d2 = await author.post(`/api/procedures/${procedure.slug}/revisions`, {})
    expect(d2.status).toBe(201)
    expect((await author.post(`/api/procedures/${procedure.slug}/revisions`, {})).status, 'one open draft per author').toBe(409)
    await author.post(`/api/revisions/${d2.body.revision.id}/submit`)
    const noComment = await editor.post(`/api/revisions/${d2.body.revision.id}/request-changes`, {})
    expect(noComment.status).toBe(400)
    expect(noComment.body.data.fields).toHaveProperty('comment')
    const back = await editor.post(`/api/revisions/${d2.body.revision.id}/request-changes`, { comment: 'Add the ripple check.' })
    expect(back.body.revision).toMatchObject({ number: 2, state: 'changes_requested' })
    expect((await editor.post(`/api/revisions/${d2.body.revision.id}/approve`)).status).toBe(409)
    const authorMail = await waitForMail(m => m.to.includes(DEMO.author) && m.subject.includes('sent back'))
    expect(authorMail.text).toMatch(/Add the ripple check/)

    // third: from the sent-back one, then declined
    const d3 = await author.post(`/api/procedures/${procedure.slug}/revisions`, { from: d2.body.revision.id })
    expect(d3.status).toBe(201)
    await author.post(`/api/revisions/${d3.body.revision.id}/submit`)
    expect((await editor.post(`/api/revisions/${d3.body.revision.id}/reject`, { comment: 'Duplicate of another procedure.' })).body.revision).toMatchObject({ number: 3, state: 'rejected' })

    // fourth: approved, the first becomes superseded
    const d4 = await author.post(`/api/procedures/${procedure.slug}/revisions`, {})
    const saved = await author.put(`/api/revisions/${d4.body.revision.id}`, { version: d4.body.revision.version, content: makeContent({ title: 'Renamed procedure title' }), changeNote: 'Clearer title' })
    expect(saved.body.revision.version).toBe(2)
    await author.post(`/api/revisions/${d4.body.revision.id}/submit`)
    await editor.post(`/api/revisions/${d4.body.revision.id}/approve`)
    const history = (await author.get(`/api/procedures/${procedure.slug}/revisions`)).body.data as Array<{ number: number, state: string }>
    expect(history.map(r => [r.number, r.state])).toEqual([[4, 'published'], [3, 'rejected'], [2, 'changes_requested'], [1, 'superseded']])
    expect((await tech.get(`/api/procedures/${procedure.slug}`)).body.revision).toMatchObject({ number: 4, content: { title: 'Renamed procedure title' } })
  })

  it('never lets an editor review their own revision', async () => {
    const editor = await signedIn(DEMO.editor)
    const { revision } = await newDraft(editor)
    await editor.post(`/api/revisions/${revision.id}/submit`)
    for (const action of ['approve', 'request-changes', 'reject']) {
      const res = await editor.post(`/api/revisions/${revision.id}/${action}`, { comment: 'my own' })
      expect(res.status).toBe(403)
      expect(res.body.message).toMatch(/Four eyes/)
    }
    const admin = await signedIn(DEMO.admin)
    expect((await admin.post(`/api/revisions/${revision.id}/approve`)).body.revision.state).toBe('published')
  })

  it('mails the editors when a revision is submitted', async () => {
    const author = await signedIn(DEMO.author)
    const { revision } = await newDraft(author, makeContent({ title: 'Mail check procedure' }))
    await author.post(`/api/revisions/${revision.id}/submit`)
    const mail = await waitForMail(m => m.to.includes(DEMO.editor) && m.subject.includes('Mail check procedure'))
    expect(mail.text).toContain(`/review/${revision.id}`)
  })

  it('refuses to submit incomplete content with 422 naming the fields, and keeps it a draft', async () => {
    const author = await signedIn(DEMO.author)
    const { revision } = await newDraft(author, { title: 'Half written', causes: [], steps: [{ key: 's1', title: 'x', instruction: '', measurement: { quantity: 'resistance', unit: 'V', min: 5, max: 1 } }] } as never)
    const res = await author.post(`/api/revisions/${revision.id}/submit`)
    expect(res.status).toBe(422)
    expect(Object.keys(res.body.data.fields)).toEqual(expect.arrayContaining(['causes', 'steps.0.measurement.unit', 'steps.0.measurement.max']))
    expect((await author.get(`/api/revisions/${revision.id}`)).body.state).toBe('draft')
    const unknown = await newDraft(author, makeContent({ symptoms: ['no-such-symptom'] }))
    const bad = await author.post(`/api/revisions/${unknown.revision.id}/submit`)
    expect(bad.status).toBe(422)
    expect(bad.body.data.fields['symptoms.0']).toMatch(/unknown symptom/)
  })

  it('keeps numbers unique and gapless under 20 concurrent submits on one procedure', async () => {
    const owner = await signedIn(DEMO.author)
    const editor = await signedIn(DEMO.editor)
    const { procedure, revision } = await newDraft(owner)
    await owner.post(`/api/revisions/${revision.id}/submit`)
    await editor.post(`/api/revisions/${revision.id}/approve`)
    const authors = await Promise.all(Array.from({ length: 20 }, () => makeUser({ role: 'author' })))
    const clients = await Promise.all(authors.map(a => new ApiClient().login(a.email, FACTORY_PASSWORD)))
    const drafts = await Promise.all(clients.map(c => c.post(`/api/procedures/${procedure.slug}/revisions`, {})))
    const results = await Promise.all(clients.map((c, i) => c.post(`/api/revisions/${drafts[i]!.body.revision.id}/submit`)))
    expect(results.map(r => r.status), JSON.stringify(results.filter(r => r.status !== 200).map(r => r.body))).toEqual(Array(20).fill(200))
    const numbers = results.map(r => r.body.revision.number as number).sort((a, b) => a - b)
    expect(numbers).toEqual(Array.from({ length: 20 }, (_, i) => i + 2))
    testDb()
    const stored = await Revision.findAll({ where: { procedureId: procedure.id }, attributes: ['number'], raw: true })
    expect(new Set(stored.map(r => r.number)).size).toBe(21)
    expect((await Procedure.findByPk(procedure.id))!.lastNumber).toBe(21)
  })
})

describe('drafts and conflicts', () => {
  it('answers a stale save with 409 and the current draft, and keeps both versions', async () => {
    const author = await signedIn(DEMO.author)
    const { revision } = await newDraft(author)
    const tabA = makeContent({ title: 'Saved from tab A' })
    const tabB = makeContent({ title: 'Saved from tab B' })
    expect((await author.put(`/api/revisions/${revision.id}`, { version: 1, content: tabA })).body.revision.version).toBe(2)
    const stale = await author.put(`/api/revisions/${revision.id}`, { version: 1, content: tabB })
    expect(stale.status).toBe(409)
    expect(stale.body.data.current.content.title).toBe('Saved from tab A')
    expect(stale.body.data.current.version).toBe(2)
    // the author keeps their own by saving on top of the current version
    expect((await author.put(`/api/revisions/${revision.id}`, { version: 2, content: tabB })).body.revision.version).toBe(3)
    expect((await author.get(`/api/revisions/${revision.id}`)).body.content.title).toBe('Saved from tab B')
  })

  it('saves an incomplete draft but names a field that is too long', async () => {
    const author = await signedIn(DEMO.author)
    const { revision } = await newDraft(author, { title: 'Only a title' } as never)
    expect((await author.put(`/api/revisions/${revision.id}`, { version: 1, content: { title: 'Only a title', steps: [{ title: 'first step' }] } })).status).toBe(200)
    const bad = await author.put(`/api/revisions/${revision.id}`, { version: 2, content: { title: 'x'.repeat(200) } })
    expect(bad.status).toBe(400)
    expect(bad.body.data.fields).toHaveProperty('content.title')
  })

  it('keeps drafts out of sight of technicians through every route, and of other authors', async () => {
    const author = await signedIn(DEMO.author)
    const tech = await signedIn(DEMO.technician)
    const other = await new ApiClient().login((await makeUser({ role: 'author' })).email, FACTORY_PASSWORD)
    const { procedure, revision } = await newDraft(author, makeContent({ title: 'Secret draft procedure' }))
    expect((await tech.get(`/api/revisions/${revision.id}`)).status).toBe(404)
    expect((await other.get(`/api/revisions/${revision.id}`)).status).toBe(404)
    expect((await tech.get(`/api/procedures/${procedure.slug}`)).status).toBe(404)
    expect((await tech.get(`/api/procedures/${procedure.slug}/revisions`)).status).toBe(404)
    expect((await tech.get(`/api/revisions/${revision.id}/compare/${revision.id}`)).status).toBe(404)
    expect((await tech.get('/api/revisions?scope=mine')).status).toBe(403)
    expect((await tech.put(`/api/revisions/${revision.id}`, { version: 1, content: makeContent() })).status).toBe(403)
    expect((await other.put(`/api/revisions/${revision.id}`, { version: 1, content: makeContent() })).status).toBe(404)
    const list = await tech.get('/api/procedures?pageSize=100')
    expect(JSON.stringify(list.body)).not.toContain('Secret draft procedure')
    expect((await (await signedIn(DEMO.editor)).get(`/api/revisions/${revision.id}`)).status, 'editors see drafts').toBe(200)
  })

  it('answers a draft-only procedure\'s reference captures exactly as a slug nobody used (no existence oracle)', async () => {
    const author = await signedIn(DEMO.author)
    const tech = await signedIn(DEMO.technician)
    const other = await new ApiClient().login((await makeUser({ role: 'author' })).email, FACTORY_PASSWORD)
    const { procedure } = await newDraft(author, makeContent({ title: 'Unannounced draft procedure' }))
    const hidden = await tech.get(`/api/procedures/${procedure.slug}/references`)
    const unknown = await tech.get(`/api/procedures/no-such-${procedure.slug}/references`)
    expect([hidden.status, unknown.status]).toEqual([404, 404])
    expect(hidden.body.message).toBe(unknown.body.message)
    expect((await other.get(`/api/procedures/${procedure.slug}/references`)).status).toBe(404)
    expect((await author.get(`/api/procedures/${procedure.slug}/references`)).body).toEqual({ data: [] })
    expect((await (await signedIn(DEMO.editor)).get(`/api/procedures/${procedure.slug}/references`)).status).toBe(200)
    expect((await tech.get('/api/procedures/vr240-stuck-at-full/references')).status, 'a live procedure answers everyone').toBe(200)
  })
})

describe('comparison and comments', () => {
  it('compares two revisions structurally with word diffs', async () => {
    const author = await signedIn(DEMO.author)
    const editor = await signedIn(DEMO.editor)
    const base = makeContent()
    const { procedure, revision } = await newDraft(author, base)
    await author.post(`/api/revisions/${revision.id}/submit`)
    await editor.post(`/api/revisions/${revision.id}/approve`)
    const d2 = (await author.post(`/api/procedures/${procedure.slug}/revisions`, {})).body.revision
    const changed = makeContent({
      ...base,
      summary: 'Why these causes: a revised summary.',
      causes: [base.causes[1]!, base.causes[0]!],
      steps: [base.steps[0]!, { key: 'cap', title: 'Measure the bulk capacitor', instruction: 'ESR first.', measurement: { quantity: 'capacitance', unit: 'µF', min: 8, max: 12 } }],
    })
    await author.put(`/api/revisions/${d2.id}`, { version: d2.version, content: changed })
    const cmp = (await author.get(`/api/revisions/${revision.id}/compare/${d2.id}`)).body
    expect(cmp.fields.map((f: { field: string }) => f.field)).toEqual(['summary'])
    const summaryParts = cmp.fields[0].parts as Array<{ value: string, added?: boolean, removed?: boolean }>
    expect(summaryParts.find(p => p.added)?.value).toMatch(/revised/)
    expect(summaryParts.find(p => p.removed)?.value).toMatch(/test/)
    expect(Object.fromEntries(cmp.causes.map((c: { key: string, kind: string }) => [c.key, c.kind]))).toEqual({ 'open-pot': 'moved', 'shorted-fet': 'moved' })
    expect(Object.fromEntries(cmp.steps.map((c: { key: string, kind: string }) => [c.key, c.kind]))).toEqual({ 'fet-diode': 'unchanged', 'cap': 'added', 'pot': 'removed' })
  })

  it('anchors review comments to steps and lets the author resolve them', async () => {
    const author = await signedIn(DEMO.author)
    const editor = await signedIn(DEMO.editor)
    const { revision } = await newDraft(author)
    await author.post(`/api/revisions/${revision.id}/submit`)
    const c = await editor.post(`/api/revisions/${revision.id}/comments`, { body: 'Say which pin is the source.', stepKey: 'fet-diode' })
    expect(c.status).toBe(201)
    expect((await editor.post(`/api/revisions/${revision.id}/comments`, { body: 'x', stepKey: 'nope' })).status).toBe(422)
    expect((await (await signedIn(DEMO.technician)).post(`/api/revisions/${revision.id}/comments`, { body: 'hi' })).status).toBe(403)
    expect((await author.patch(`/api/review-comments/${c.body.comment.id}`, { resolved: true })).body.comment.resolved).toBe(true)
    const detail = (await author.get(`/api/revisions/${revision.id}`)).body
    expect(detail.comments[0]).toMatchObject({ stepKey: 'fet-diode', resolved: true })
  })
})

describe('retiring', () => {
  it('takes a procedure off the bench for technicians; editors still see it', async () => {
    const author = await signedIn(DEMO.author)
    const editor = await signedIn(DEMO.editor)
    const tech = await signedIn(DEMO.technician)
    const { procedure, revision } = await newDraft(author)
    await author.post(`/api/revisions/${revision.id}/submit`)
    await editor.post(`/api/revisions/${revision.id}/approve`)
    expect((await author.post(`/api/procedures/${procedure.slug}/retire`, { reason: 'replaced' })).status).toBe(403)
    expect((await editor.post(`/api/procedures/${procedure.slug}/retire`, {})).status).toBe(400)
    expect((await editor.post(`/api/procedures/${procedure.slug}/retire`, { reason: 'Replaced by a newer procedure' })).body.procedure.status).toBe('retired')
    expect((await editor.post(`/api/procedures/${procedure.slug}/retire`, { reason: 'again' })).status).toBe(409)
    expect((await tech.get(`/api/procedures/${procedure.slug}`)).status).toBe(404)
    expect((await editor.get(`/api/procedures/${procedure.slug}`)).body.procedure.status).toBe('retired')
    expect(JSON.stringify((await tech.get('/api/procedures?pageSize=100')).body)).not.toContain(procedure.slug)
    expect((await author.post(`/api/procedures/${procedure.slug}/revisions`, {})).status).toBe(409)
    // The page an editor still reaches says "retired" and does not call the revision "Live".
    const page = String((await editor.request('GET', `/procedures/${procedure.slug}`, undefined, { accept: 'text/html' })).body)
    expect(page).toContain('data-testid="retired-banner"')
    expect(page).not.toContain('data-testid="state-published"')
  })
})

describe('vocabularies', () => {
  it('creates symptoms and device types with generated slugs; a duplicate name is 409', async () => {
    const editor = await signedIn(DEMO.editor)
    const name = `Test symptom ${Date.now()}`
    const created = await editor.post('/api/symptoms', { name, synonyms: ['tst', 'tst'], description: '' })
    expect(created.status).toBe(201)
    expect(created.body.symptom.slug).toMatch(/^test-symptom-\d+$/)
    expect(created.body.symptom.synonyms).toEqual(['tst'])
    expect((await editor.post('/api/symptoms', { name, synonyms: [] })).status).toBe(409)
    const type = await editor.post('/api/device-types', { name: `Test device ${Date.now()}`, description: 'x' })
    expect(type.status).toBe(201)
    expect((await editor.post('/api/device-types', { name: type.body.deviceType.name })).status).toBe(409)
    expect((await (await signedIn(DEMO.author)).post('/api/symptoms', { name: 'Authors cannot', synonyms: [] })).status).toBe(403)
  })

  it('lets an author propose a symptom, blocks publishing until an editor accepts or merges it', async () => {
    const author = await signedIn(DEMO.author)
    const editor = await signedIn(DEMO.editor)
    const proposed = (await author.post('/api/symptoms/propose', { name: `Clicks then dies ${Date.now()}`, synonyms: ['click dead'] })).body.symptom
    expect(proposed.status).toBe('proposed')
    const { procedure, revision } = await newDraft(author, makeContent({ symptoms: ['does-not-dim', proposed.slug] }))
    expect((await author.post(`/api/revisions/${revision.id}/submit`)).status).toBe(200)
    const blocked = await editor.post(`/api/revisions/${revision.id}/approve`)
    expect(blocked.status).toBe(409)
    expect(blocked.body.message).toMatch(/proposed symptom/)
    const merged = await editor.post(`/api/symptoms/${proposed.id}/merge`, { into: 'dead-no-output' })
    expect(merged.body.symptom.synonyms).toContain(proposed.name)
    expect((await editor.post(`/api/revisions/${revision.id}/approve`)).body.revision.state).toBe('published')
    // The revision keeps the old slug; the library reads it as the symptom it was merged into.
    const listed = (await editor.get('/api/procedures?symptom=dead-no-output&pageSize=100')).body.data as Array<{ id: number, symptoms: Array<{ slug: string }> }>
    const item = listed.find(p => p.id === procedure.id)
    expect(item?.symptoms.map(s => s.slug)).toEqual(['does-not-dim', 'dead-no-output'])
  })
})

describe('changing vocabulary entries', () => {
  it('changes only the fields a PATCH names; the others keep their values', async () => {
    const editor = await signedIn(DEMO.editor)
    const tag = randomBytes(3).toString('hex')
    const symptom = (await editor.post('/api/symptoms', { name: `Ticks when warm ${tag}`, synonyms: ['ticking', 'clicks warm'], description: 'A relay-like tick.' })).body.symptom
    const described = await editor.patch(`/api/symptoms/${symptom.id}`, { description: 'A tick once the case is warm.' })
    expect(described.status).toBe(200)
    expect(described.body.symptom).toMatchObject({ synonyms: ['ticking', 'clicks warm'], description: 'A tick once the case is warm.', name: `Ticks when warm ${tag}` })
    const renamed = await editor.patch(`/api/symptoms/${symptom.id}`, { name: `Ticks once warm ${tag}` })
    expect(renamed.body.symptom).toMatchObject({ synonyms: ['ticking', 'clicks warm'], description: 'A tick once the case is warm.' })
    const type = (await editor.post('/api/device-types', { name: `Bench type ${tag}`, description: 'Kept on rename.' })).body.deviceType
    const typeRenamed = await editor.patch(`/api/device-types/${type.id}`, { name: `Bench type renamed ${tag}` })
    expect(typeRenamed.status).toBe(200)
    expect(typeRenamed.body.deviceType).toMatchObject({ name: `Bench type renamed ${tag}`, description: 'Kept on rename.' })
  })
})

describe('the published library', () => {
  it('filters by device type and symptom and paginates as { data, meta }', async () => {
    const tech = await signedIn(DEMO.technician)
    const all = (await tech.get('/api/procedures?pageSize=100')).body
    const byType = (await tech.get('/api/procedures?deviceType=usb-c-charger-30w&pageSize=100')).body
    expect(byType.data.length).toBeGreaterThan(0)
    expect(byType.data.length).toBe(all.data.filter((p: { deviceType: { slug: string } }) => p.deviceType.slug === 'usb-c-charger-30w').length)
    const bySymptom = (await tech.get('/api/procedures?symptom=does-not-dim&pageSize=100')).body
    expect(bySymptom.data.length).toBe(all.data.filter((p: { symptoms: Array<{ slug: string }> }) => p.symptoms.some(s => s.slug === 'does-not-dim')).length)
    const page = (await tech.get('/api/procedures?pageSize=2&page=2')).body
    expect(page.meta).toMatchObject({ page: 2, pageSize: 2, total: all.meta.total })
    expect(page.data).toHaveLength(2)
    expect((await tech.get('/api/procedures?pageSize=1000')).status).toBe(400)
  })
})

describe('the published reading', () => {
  it('shows a renamed symptom, a new caption and a renamed author at the very next read', async () => {
    const tag = randomBytes(3).toString('hex')
    const editor = await signedIn(DEMO.editor)
    const admin = await signedIn(DEMO.admin)
    const tech = await signedIn(DEMO.technician)
    const writer = await makeUser({ role: 'author', name: `Writer ${tag}` })
    const author = await new ApiClient().login(writer.email, FACTORY_PASSWORD)
    const symptom = (await editor.post('/api/symptoms', { name: `Hums at low setting ${tag}` })).body.symptom
    const fd = new FormData()
    fd.append('file', new Blob([await sharp({ create: { width: 320, height: 200, channels: 3, background: { r: 90, g: 90, b: 90 } } }).jpeg().toBuffer()], { type: 'image/jpeg' }), 'board.jpg')
    const upload = (await author.post('/api/uploads', fd)).body
    expect((await author.patch(`/api/uploads/${upload.id}`, { caption: 'Board, top side' })).status).toBe(200)
    const content = makeContent({ symptoms: [symptom.slug] })
    content.steps[0]!.imageIds = [upload.id]
    const { procedure, revision } = await newDraft(author, content)
    expect((await author.post(`/api/revisions/${revision.id}/submit`)).status).toBe(200)
    expect((await editor.post(`/api/revisions/${revision.id}/approve`)).status).toBe(200)

    const read = async () => (await tech.get(`/api/procedures/${procedure.slug}`)).body
    const before = await read()
    expect(before.labels.symptoms.map((s: { name: string }) => s.name)).toEqual([`Hums at low setting ${tag}`])
    expect(before.attachments[String(upload.id)].caption).toBe('Board, top side')
    expect(before.author.name).toBe(`Writer ${tag}`)
    expect(await read()).toEqual(before) // a second read answers the same

    expect((await editor.patch(`/api/symptoms/${symptom.id}`, { name: `Buzzes when dimmed low ${tag}` })).status).toBe(200)
    expect((await read()).labels.symptoms.map((s: { name: string }) => s.name)).toEqual([`Buzzes when dimmed low ${tag}`])
    expect((await author.patch(`/api/uploads/${upload.id}`, { caption: 'Board, solder side' })).status).toBe(200)
    expect((await read()).attachments[String(upload.id)].caption).toBe('Board, solder side')
    expect((await admin.patch(`/api/users/${writer.id}`, { name: `Writer renamed ${tag}` })).status).toBe(200)
    expect((await read()).author.name).toBe(`Writer renamed ${tag}`)
  })
})
