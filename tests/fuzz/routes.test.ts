import fc from 'fast-check'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { ApiClient } from '../helpers/api'
import { clearLoginFailures, FACTORY_PASSWORD, makeUser } from '../helpers/db'
import { listApiRoutes, routeKey, type ApiRoute } from '../helpers/routes'

// Property-based fuzzing of every API route (OWASP ASVS 5.0 input validation: bad input gets a
// 4xx, never a 5xx). Path parameters, query strings and JSON bodies are drawn at random, with
// ids that exist among them so that requests get past the lookups into the validation.
const RUNS = 500

const QUERY_KEYS = ['q', 'page', 'pageSize', 'limit', 'offset', 'deviceType', 'symptom', 'symptoms', 'hazard', 'procedure', 'outcome', 'cause', 'technician', 'from', 'to', 'sort', 'buckets', 'size', 'state', 'status']
const BODY_KEYS = ['name', 'email', 'role', 'active', 'content', 'version', 'value', 'spec', 'body', 'stepKey', 'synonyms', 'into', 'reason', 'label', 'recordId', 'procedureSlug', 'kind', 'note', 'unit', 'steps', 'outcome', 'confirmedCause', 'minutes', 'parts', 'photoIds', 'token', 'password', 'caption', 'changeNote', 'comeback']
const WEIRD = ['%00', '%E0%A4%A', '..%2F..%2Fetc', '-1', '0', '1e309', '99999999999999999999', 'null', 'undefined', '[]', '{}', '%', '\u202E', 'NaN']

const text = fc.oneof(fc.string({ maxLength: 40 }), fc.string({ unit: 'grapheme', maxLength: 20 }), fc.constantFrom(...WEIRD))
const encoded = fc.oneof(text.map(encodeURIComponent), fc.constantFrom(...WEIRD))
const param = fc.oneof(fc.integer({ min: -2, max: 60 }).map(String), encoded)
const query = fc.dictionary(fc.constantFrom(...QUERY_KEYS), encoded, { maxKeys: 4 })
  .map(q => Object.entries(q).map(([k, v]) => `${k}=${v}`).join('&'))
const json = fc.jsonValue({ maxDepth: 3 })
const body = fc.oneof(
  json,
  fc.dictionary(fc.constantFrom(...BODY_KEYS), json, { maxKeys: 5 }),
  fc.constantFrom('{"name":', '[1,2', 'null', '"', '{"content":{"steps":[{"measurement":{"min":"x"}}]}}'),
)

function path(route: ApiRoute, params: string[]): string {
  let k = 0
  return route.path.replace(/:(\w+)/g, () => params[k++] ?? '1')
}

describe('every API route under random input', () => {
  let admin: ApiClient
  const anonymous = new ApiClient()
  beforeAll(async () => {
    // An admin of its own: every route lets it through to validation, and nothing it does
    // (signing out included) touches the demo accounts other tests use.
    const user = await makeUser({ role: 'admin' })
    admin = await new ApiClient().login(user.email, FACTORY_PASSWORD)
  })
  afterAll(async () => {
    await clearLoginFailures()
  })

  it.each(listApiRoutes().map(r => ({ ...r, key: routeKey(r) })))(`$key answers ${RUNS} random requests without a 5xx`, async (route) => {
    // Signing in and out are fuzzed anonymously: a random sign-out would end the admin's session.
    const client = route.path.startsWith('/api/auth/') ? anonymous : admin
    const params = fc.array(param, { minLength: 2, maxLength: 2 })
    const failures: string[] = []
    await fc.assert(fc.asyncProperty(params, query, body, async (p, q, b) => {
      const url = `${path(route, p)}${q ? `?${q}` : ''}`
      const res = await client.request(route.method, url, route.method === 'GET' ? undefined : typeof b === 'string' ? b : JSON.stringify(b))
      if (res.status >= 500) failures.push(`${route.method} ${url} ${JSON.stringify(b)} → ${res.status} ${JSON.stringify(res.body).slice(0, 300)}`)
      return res.status < 500
    }), { numRuns: RUNS, endOnFailure: true })
    expect(failures).toEqual([])
    if (route.path.startsWith('/api/auth/')) await clearLoginFailures()
  }, 300_000)
})
