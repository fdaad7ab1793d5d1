// Role × route matrix over every route file in server/api (ASVS 5.0 V8.2.2, OWASP WSTG-ATHZ):
// each role and an anonymous caller against each route; a new route without an entry here fails.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { ROLES, type Role } from '../../shared/types/roles'
import { ApiClient, DEMO, signedIn } from '../helpers/api'
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
