// Role × route matrix over every route file in server/api (ASVS 5.0 V8.2.2, OWASP WSTG-ATHZ):
// each role and an anonymous caller against each route; a new route without an entry here fails.
import sharp from 'sharp'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { User } from '../../server/db'
import { ROLES, roleAtLeast, type Role } from '../../shared/types/roles'
import { ApiClient, DEMO, signedIn } from '../helpers/api'
import { makeContent } from '../helpers/content'
import { FACTORY_PASSWORD, makeUser, testDb } from '../helpers/db'
import { listApiRoutes, routeKey } from '../helpers/routes'

type Access = 'public' | Role
/** The least role each route needs. Keep it in step with the route's requireRole call. */
export const ROUTE_ACCESS: Record<string, Access> = {
  'GET /api/health': 'public',
  'POST /api/auth/login': 'public',
  'POST /api/auth/logout': 'public',
  'GET /api/me': 'technician',
  'GET /api/users': 'admin',
  'POST /api/users/invite': 'admin',
  'PATCH /api/users/:id': 'admin',
  'POST /api/users/:id/invitation': 'admin',
  'DELETE /api/users/:id/invitation': 'admin',
  'GET /api/invitations/:token': 'public',
  'POST /api/invitations/accept': 'public',
  'GET /api/admin/mail': 'admin',
  'GET /api/admin/mail/:id': 'admin',
  'GET /api/procedures': 'technician',
  'POST /api/procedures': 'author',
  'GET /api/procedures/:slug': 'technician',
  'GET /api/procedures/:slug/revisions': 'technician',
  'POST /api/procedures/:slug/revisions': 'author',
  'POST /api/procedures/:slug/retire': 'editor',
  'GET /api/revisions': 'author',
  'GET /api/revisions/:id': 'technician',
  'PUT /api/revisions/:id': 'author',
  'POST /api/revisions/:id/submit': 'author',
  'POST /api/revisions/:id/approve': 'editor',
  'POST /api/revisions/:id/request-changes': 'editor',
  'POST /api/revisions/:id/reject': 'editor',
  'POST /api/revisions/:id/comments': 'author',
  'GET /api/revisions/:id/compare/:other': 'technician',
  'PATCH /api/review-comments/:id': 'author',
  'POST /api/uploads': 'technician',
  'PATCH /api/uploads/:id': 'technician',
  'GET /api/files/:id': 'technician',
  'GET /api/symptoms': 'technician',
  'POST /api/symptoms': 'editor',
  'POST /api/symptoms/propose': 'author',
  'PATCH /api/symptoms/:id': 'editor',
  'POST /api/symptoms/:id/accept': 'editor',
  'POST /api/symptoms/:id/merge': 'editor',
  'GET /api/device-types': 'technician',
  'POST /api/device-types': 'editor',
  'PATCH /api/device-types/:id': 'editor',
  'POST /api/records': 'technician',
  'GET /api/records': 'technician',
  'GET /api/records/export.csv': 'technician',
  'GET /api/records/:id': 'technician',
  'PATCH /api/records/:id': 'technician',
  'POST /api/records/:id/close': 'technician',
  'POST /api/records/:id/amendments': 'technician',
  'GET /api/records/:id/diagnosis': 'technician',
  'POST /api/records/:id/procedure': 'technician',
  'POST /api/readings/evaluate': 'technician',
  'POST /api/step-flags': 'technician',
  'POST /api/step-flags/:id/resolve': 'author',
  'GET /api/revisions/:id/flags': 'technician',
  'GET /api/evidence': 'technician',
  'GET /api/dashboard': 'technician',
  'GET /api/search': 'technician',
  'GET /api/symptoms/common': 'technician',
  'GET /api/symptoms/match': 'technician',
  'POST /api/captures': 'technician',
  'GET /api/captures': 'technician',
  'GET /api/captures/:id': 'technician',
  'GET /api/captures/:id/series': 'technician',
  'GET /api/captures/:id/matches': 'technician',
  'POST /api/captures/:id/references': 'author',
  'GET /api/procedures/:slug/references': 'technician',
}

// Placeholder values: the route only has to get past authorisation (a 400/404 after that is fine).
const fill = (path: string) => path.replace(/:(\w+)/g, (_, name: string) => (name === 'token' ? 'x'.repeat(40) : name === 'id' || name === 'other' ? '999999' : 'placeholder'))

const clients: Partial<Record<Role | 'anonymous', ApiClient>> = {}
beforeAll(async () => {
  clients.anonymous = new ApiClient()
  clients.technician = await signedIn(DEMO.technician)
  clients.author = await signedIn(DEMO.author)
  clients.editor = await signedIn(DEMO.editor)
  clients.admin = await signedIn(DEMO.admin)
})
afterAll(() => undefined)

describe('every API route has a declared access level', () => {
  it('matches the route files', () => {
    const keys = listApiRoutes().map(routeKey)
    expect(keys.filter(k => !(k in ROUTE_ACCESS)), 'routes missing from ROUTE_ACCESS').toEqual([])
    expect(Object.keys(ROUTE_ACCESS).filter(k => !keys.includes(k)), 'entries without a route file').toEqual([])
  })
})

describe.each(listApiRoutes().filter(r => ROUTE_ACCESS[routeKey(r)] !== 'public'))('$method $path', (route) => {
  const needed = ROUTE_ACCESS[routeKey(route)] as Role
  it('refuses an anonymous caller with 401', async () => {
    const res = await clients.anonymous!.request(route.method, fill(route.path), route.method === 'GET' ? undefined : {})
    expect(res.status).toBe(401)
  })
  it.each(ROLES.map(r => ({ role: r })))('$role', async ({ role }) => {
    const res = await clients[role]!.request(route.method, fill(route.path), route.method === 'GET' ? undefined : {})
    if (ROLES.indexOf(role) < ROLES.indexOf(needed)) expect(res.status, JSON.stringify(res.body)).toBe(403)
    else expect([401, 403], `${role} should pass authorisation: ${JSON.stringify(res.body)}`).not.toContain(res.status)
  })
})

// Object ownership (OWASP WSTG-ATHZ-04, IDOR): two people of the same role, one trying the
// other's objects by id. Records are the team's and readable by all; changing one, or linking
// something to one, is its technician's (or an editor's); an unattached photo is its uploader's;
// a draft and its images are its author's (and the editors').
describe.each(ROLES.map(role => ({ role })))('two people who are both $role', ({ role }) => {
  const people: Array<{ id: number, client: ApiClient }> = []
  const [owner, other] = [0, 1]
  const editorial = roleAtLeast(role, 'editor')
  const base = new ApiClient().baseUrl
  const fileStatus = async (who: number, url: string) => (await fetch(`${base}${url}`, { headers: { cookie: people[who]!.client.cookie } })).status
  async function photo(who: number) {
    const fd = new FormData()
    fd.append('file', new Blob([await sharp({ create: { width: 40, height: 30, channels: 3, background: { r: 120, g: 20, b: 20 } } }).jpeg().toBuffer()], { type: 'image/jpeg' }), 'x.jpg')
    const res = await people[who]!.client.post('/api/uploads', fd)
    expect(res.status).toBe(201)
    return res.body as { id: number, url: string, thumbnailUrl: string }
  }

  beforeAll(async () => {
    for (let i = 0; i < 2; i++) {
      const user = await makeUser({ role })
      people.push({ id: user.id, client: await new ApiClient().login(user.email, FACTORY_PASSWORD) })
    }
  })
  afterAll(async () => {
    // The other test files expect the demo admin to be the only active admin.
    testDb()
    await User.update({ active: false }, { where: { id: people.map(p => p.id) } })
  })

  it('an unattached photo: the other can neither open, caption nor attach it', async () => {
    const image = await photo(owner)
    expect(await fileStatus(other, image.url)).toBe(404)
    expect(await fileStatus(other, image.thumbnailUrl)).toBe(404)
    expect((await people[other]!.client.patch(`/api/uploads/${image.id}`, { caption: 'taken' })).status).toBe(404)
    const record = (await people[other]!.client.post('/api/records', { procedureSlug: 'vr240-stuck-at-full' })).body.record
    const linked = await people[other]!.client.patch(`/api/records/${record.id}`, { version: record.version, photoIds: [image.id] })
    expect(linked.status).toBe(422)
    expect(linked.body.data.fields).toEqual({ 'photoIds.0': 'not a photo you uploaded' })
  })

  it(`a record in progress: the other reads it${editorial ? ' and, as an editor, may change it' : ', but neither changes it nor attaches to it'}`, async () => {
    const record = (await people[owner]!.client.post('/api/records', { procedureSlug: 'vr240-stuck-at-full' })).body.record
    const mine = await photo(other)
    expect((await people[other]!.client.get(`/api/records/${record.id}`)).status).toBe(200)
    const changed = await people[other]!.client.patch(`/api/records/${record.id}`, { version: record.version, notes: 'by the other', photoIds: [mine.id] })
    expect(changed.status, JSON.stringify(changed.body)).toBe(editorial ? 200 : 403)
    const closed = await people[other]!.client.post(`/api/records/${record.id}/close`, { confirmedCause: null, outcome: 'no_fault_found', minutes: 1 })
    expect(closed.status).toBe(editorial ? 200 : 403)
  })

  it.runIf(roleAtLeast(role, 'author'))(`a draft and its image: the other ${editorial ? 'sees them (an editor reviews drafts) but does not edit' : 'finds neither'}`, async () => {
    const image = await photo(owner)
    const content = makeContent()
    content.steps[0]!.imageIds = [image.id]
    const created = await people[owner]!.client.post('/api/procedures', { content })
    expect(created.status).toBe(201)
    const { procedure, revision } = created.body
    const seen = editorial ? 200 : 404
    expect((await people[other]!.client.get(`/api/revisions/${revision.id}`)).status).toBe(seen)
    expect(await fileStatus(other, image.url)).toBe(seen)
    expect(await fileStatus(other, image.thumbnailUrl)).toBe(seen)
    expect((await people[other]!.client.get(`/api/procedures/${procedure.slug}/references`)).status).toBe(seen)
    expect((await people[other]!.client.put(`/api/revisions/${revision.id}`, { version: revision.version, content: makeContent() })).status).toBe(editorial ? 403 : 404)
    const flag = await people[other]!.client.post('/api/step-flags', { revisionId: revision.id, stepKey: content.steps[0]!.key, kind: 'unclear', note: 'what is this?' })
    expect(flag.status).toBe(editorial ? 201 : 404)
  })
})

describe('API conventions', () => {
  it('answers unknown API paths with a JSON 404', async () => {
    const res = await new ApiClient().get('/api/no-such-thing')
    expect(res.status).toBe(404)
    expect(res.body).toMatchObject({ statusCode: 404 })
  })
  it('refuses unsafe requests from another origin (CSRF: Origin and Sec-Fetch-Site)', async () => {
    const admin = clients.admin!
    const cross = await admin.post('/api/users/invite', { email: 'csrf@test.example', role: 'technician' }, { origin: 'http://evil.example' })
    expect(cross.status).toBe(403)
    const site = await admin.post('/api/users/invite', { email: 'csrf@test.example', role: 'technician' }, { 'sec-fetch-site': 'cross-site' })
    expect(site.status).toBe(403)
    const own = await admin.post('/api/users/invite', { email: 'not-an-email', role: 'technician' }, { 'origin': admin.baseUrl, 'sec-fetch-site': 'same-origin' })
    expect(own.status).toBe(400)
  })
  it('names the failing field in validation errors', async () => {
    const res = await clients.admin!.post('/api/users/invite', { email: 'nobody', role: 'wizard' })
    expect(res.status).toBe(400)
    expect(res.body.data.fields).toHaveProperty('email')
    expect(res.body.data.fields).toHaveProperty('role')
    expect(res.body.message).toMatch(/email/)
  })
  it('rejects a malformed JSON body with 400, not 500', async () => {
    const res = await clients.admin!.request('POST', '/api/users/invite', '{"email":', {})
    expect(res.status).toBe(400)
  })
})
