import fc from 'fast-check'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { startApp, stopApp, testProfile } from '../../scripts/lib/stack'
import { ApiClient, DEMO, signedIn } from '../helpers/api'
import { makeContent } from '../helpers/content'
import { testDb } from '../helpers/db'
import { lastChangeOf, procedureInReview, publishHeldOpen } from '../helpers/late-commit'
import { waitUntil } from '../helpers/stack'

// An answer without hits (an instance still starting answers 503) has not found it yet.
const found = (body: { hits?: Array<{ slug: string }> }, slug: string) => (body.hits ?? []).some(h => h.slug === slug)

describe('search over published procedures', () => {
  it('finds demo procedures from technician phrasing with typos', async () => {
    const tech = await signedIn(DEMO.technician)
    const res = await tech.get(`/api/search?q=${encodeURIComponent('stuk at ful brightnes')}`)
    expect(res.status).toBe(200)
    expect(res.body.hits.slice(0, 5).map((h: { slug: string }) => h.slug)).toContain('vr240-stuck-at-full')
    expect(res.body, 'no timing for developers in what the browser gets').not.toHaveProperty('tookMs')
  })

  it('finds nothing for words that carry no symptom', async () => {
    const tech = await signedIn(DEMO.technician)
    for (const q of ['nothing', 'not', 'it does not', 'zzqx nothing']) {
      const res = await tech.get(`/api/search?q=${encodeURIComponent(q)}`)
      expect(res.status, q).toBe(200)
      expect(res.body.hits, q).toEqual([])
      expect(res.body.total, q).toBe(0)
    }
  })

  it('counts facets correctly under combined filters', async () => {
    const tech = await signedIn(DEMO.technician)
    type Item = { slug: string, deviceType: { slug: string }, symptoms: Array<{ slug: string }>, hazards: string[] }
    let library: Item[] = []
    let res: { total: number, hits: Array<{ slug: string }>, facets: Record<string, Array<{ value: string, count: number }>> } = { total: -1, hits: [], facets: {} }
    let expected: Item[] = []
    // Earlier tests publish and retire procedures; the index follows within one poll (≈ 1.5 s).
    await waitUntil('index in step with the library', async () => {
      library = (await tech.get('/api/procedures?pageSize=100')).body.data
      res = (await tech.get('/api/search?deviceType=rotary-led-dimmer-trailing-edge&hazard=mains&limit=100')).body
      expected = library.filter(p => p.deviceType.slug === 'rotary-led-dimmer-trailing-edge' && p.hazards.includes('mains'))
      return res.total === expected.length && res.hits.map(h => h.slug).sort().join() === expected.map(p => p.slug).sort().join()
    }, 10_000, 300)
    expect(res.hits.map(h => h.slug).sort()).toEqual(expected.map(p => p.slug).sort())
    for (const facet of res.facets.symptom!) {
      expect(facet.count, facet.value).toBe(expected.filter(p => p.symptoms.some(s => s.slug === facet.value)).length)
    }
    // The device-type facet ignores its own filter but keeps the hazard one.
    for (const facet of res.facets.deviceType!) {
      expect(facet.count, facet.value).toBe(library.filter(p => p.deviceType.slug === facet.value && p.hazards.includes('mains')).length)
    }
  })

  it('never answers a bad query with a 500', async () => {
    const tech = await signedIn(DEMO.technician)
    const long = await tech.get(`/api/search?q=${'a'.repeat(10_240)}`)
    expect(long.status).toBe(400)
    expect(long.body.data.fields).toHaveProperty('q')
    for (const q of ['\u0000\u0007\u001B[31m', '!!!???...;;;', '   ', '\'"; DROP TABLE procedures; --', '𝔡𝔢𝔞𝔡 ☠', '%%%', 'a'.repeat(1999)]) {
      const res = await tech.get(`/api/search?q=${encodeURIComponent(q)}`)
      expect(res.status, q).toBe(200)
    }
    expect((await tech.get('/api/search?limit=1000')).status).toBe(400)
    expect((await tech.get('/api/search?hazard=lava')).status).toBe(400)
    // Property-based: arbitrary strings and parameters (OWASP ASVS 5.0 input validation).
    await fc.assert(fc.asyncProperty(fc.string({ maxLength: 300 }), fc.option(fc.string({ maxLength: 40 })), async (q, dt) => {
      const res = await tech.get(`/api/search?q=${encodeURIComponent(q)}${dt === null ? '' : `&deviceType=${encodeURIComponent(dt)}`}`)
      return res.status === 200 || res.status === 400
    }), { numRuns: 500 })
  }, 120_000)
})

describe('what search shows follows the database, on every instance', () => {
  const B_PORT = testProfile().ports.app + 1
  const B = `http://127.0.0.1:${B_PORT}`
  beforeAll(async () => {
    await startApp(testProfile(), { port: B_PORT, instance: 'app-b' })
  }, 90_000)
  afterAll(async () => {
    await stopApp(testProfile(), 'app-b')
  })

  const searchBody = async (c: ApiClient, q: string) => (await c.get(`/api/search?q=${encodeURIComponent(q)}`)).body
  const publish = async (author: ApiClient, editor: ApiClient, content: ReturnType<typeof makeContent>) => {
    const created = (await author.post('/api/procedures', { content })).body
    await author.post(`/api/revisions/${created.revision.id}/submit`)
    expect((await editor.post(`/api/revisions/${created.revision.id}/approve`)).status).toBe(200)
    return created.procedure as { id: number, slug: string }
  }
  // Each instance polls the change log every 1.5 s; the waits are generous so that a machine
  // busy with other work does not fail what is checked here: what each instance ends up showing.
  const SYNC_WAIT_MS = 20_000

  it('never shows drafts or reviews; publishing on A is found on B, retiring on A removes it from B', async () => {
    const stamp = Date.now().toString(36)
    const word = `zephyrquux${stamp}`
    const author = await signedIn(DEMO.author)
    const editor = await signedIn(DEMO.editor)
    const onB = await new ApiClient(B).login(DEMO.editor)
    const techB = await new ApiClient(B).login(DEMO.technician)

    const created = (await author.post('/api/procedures', { content: makeContent({ title: `Hum from ${word} choke`, summary: `The ${word} winding.` }) })).body
    expect((await searchBody(editor, word)).total, 'draft not searchable').toBe(0)
    await author.post(`/api/revisions/${created.revision.id}/submit`)
    // Something published after the submission: once both instances find it, each has applied
    // every change logged before it, the submission included.
    const marker = `quillmarker${stamp}`
    const markerSlug = (await publish(author, editor, makeContent({ title: `Bench note ${marker}`, summary: `The ${marker} entry.` }))).slug
    await waitUntil('a later publication visible on A and B', async () => found(await searchBody(editor, marker), markerSlug) && found(await searchBody(techB, marker), markerSlug), SYNC_WAIT_MS, 100)
    for (const c of [editor, onB, techB]) {
      const res = await searchBody(c, word)
      expect(res.total, 'in review: not searchable').toBe(0)
      expect(JSON.stringify(res)).not.toContain(word)
    }

    expect((await editor.post(`/api/revisions/${created.revision.id}/approve`)).status).toBe(200)
    await waitUntil('published procedure visible on B', async () => found(await searchBody(techB, word), created.procedure.slug), SYNC_WAIT_MS, 100)
    const published = await searchBody(techB, word)
    expect(published.hits.map((h: { slug: string }) => h.slug)).toEqual([created.procedure.slug])
    expect(published.hits[0].highlights.some((h: { snippet: Array<{ text: string, match: boolean }> }) => h.snippet.some(p => p.match && p.text.toLowerCase() === word))).toBe(true)

    expect((await editor.post(`/api/procedures/${created.procedure.slug}/retire`, { reason: 'Search sync check' })).status).toBe(200)
    expect((await editor.post(`/api/procedures/${markerSlug}/retire`, { reason: 'Search sync check' })).status).toBe(200)
    await waitUntil('retired procedures gone from A and B', async () => {
      for (const c of [editor, techB]) if ((await searchBody(c, word)).total !== 0 || (await searchBody(c, marker)).total !== 0) return false
      return true
    }, SYNC_WAIT_MS, 100)
    for (const c of [editor, onB, techB]) {
      const res = await searchBody(c, word)
      expect(res.total).toBe(0)
      expect(JSON.stringify(res)).not.toContain(word)
      expect(JSON.stringify(res.suggestions)).not.toContain(word)
    }
  }, 60_000)

  it('finds a publication that took its change-log id before a later change but committed after it, on A and B', async () => {
    const stamp = Date.now().toString(36)
    const word = `latecomer${stamp}`
    const author = await signedIn(DEMO.author)
    const editor = await signedIn(DEMO.editor)
    const techA = await signedIn(DEMO.technician)
    const techB = await new ApiClient(B).login(DEMO.technician)
    const finds = async (c: ApiClient, q: string, slug: string) => found(await searchBody(c, q), slug)
    const db = testDb()
    const late = await procedureInReview(author, word)
    const held = await publishHeldOpen(db, { procedureId: late.procedure.id, revisionId: late.revision.id, reviewerId: (await editor.get('/api/me')).body.user.id })
    const marker = `quillmarker${stamp}`
    let markerSlug = ''
    try {
      const markerProc = await publish(author, editor, makeContent({ title: `Bench note ${marker}`, summary: `The ${marker} entry.` }))
      markerSlug = markerProc.slug
      expect(await lastChangeOf(db, markerProc.id), 'the later publication has the higher change-log id').toBeGreaterThan(held.changeId)
      // Both instances have read the change log past the held id, which was not committed then.
      await waitUntil('the later publication found on A and B', async () => await finds(techA, marker, markerSlug) && await finds(techB, marker, markerSlug), SYNC_WAIT_MS, 100)
      expect(await finds(techA, word, late.procedure.slug)).toBe(false)
    }
    finally {
      await held.commit()
    }
    await waitUntil('the late publication found on A and B', async () => await finds(techA, word, late.procedure.slug) && await finds(techB, word, late.procedure.slug), SYNC_WAIT_MS, 100)
    for (const slug of [late.procedure.slug, markerSlug]) expect((await editor.post(`/api/procedures/${slug}/retire`, { reason: 'Search sync check' })).status).toBe(200)
  }, 60_000)

  it('follows vocabulary changes: a new synonym finds its procedures on B', async () => {
    const editor = await signedIn(DEMO.editor)
    const techB = await new ApiClient(B).login(DEMO.technician)
    const synonym = `wobblegleam${Date.now().toString(36)}`
    const symptoms = (await editor.get('/api/symptoms')).body.data as Array<{ id: number, slug: string, synonyms: string[] }>
    const target = symptoms.find(s => s.slug === 'does-not-dim')!
    await editor.patch(`/api/symptoms/${target.id}`, { synonyms: [...target.synonyms, synonym] })
    await waitUntil('synonym searchable on B', async () => (await techB.get(`/api/search?q=${synonym}`)).body.total > 0, SYNC_WAIT_MS, 100)
    await editor.patch(`/api/symptoms/${target.id}`, { synonyms: target.synonyms })
  }, 30_000)
})
