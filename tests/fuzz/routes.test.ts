import { request as httpRequest } from 'node:http'
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

// Oversize bodies on every route that takes one (OWASP ASVS 5.0: bounded input): a declared
// length over the route's limit is refused before the body is read; a body sent without a length
// is refused once it passes the limit (JSON routes before the route runs, the two upload routes
// when they read the file). Either way a JSON 413, never a 5xx, never a hang.
const MB = 1024 * 1024
const LIMITS: Array<[RegExp, number]> = [
  [/^POST \/api\/uploads$/, 15 * MB + 64 * 1024],
  [/^POST \/api\/captures$/, 50 * MB + 64 * 1024],
  [/^(PUT \/api\/revisions\/:id|POST \/api\/procedures|POST \/api\/procedures\/:slug\/revisions)$/, 4 * MB],
]
const limitOf = (key: string) => LIMITS.find(([r]) => r.test(key))?.[1] ?? 256 * 1024
const OVERSIZE_RUNS = 50

function oversize(route: ApiRoute, cookie: string, opts: { chunked: boolean, size: number, chunk: number, type: string }): Promise<{ status: number, body: string }> {
  const url = new URL(`${new ApiClient().baseUrl}${path(route, ['1', '1'])}`)
  return new Promise((resolve, reject) => {
    const headers: Record<string, string | number> = { 'cookie': cookie, 'content-type': opts.type }
    if (opts.chunked) headers['transfer-encoding'] = 'chunked'
    else headers['content-length'] = opts.size
    const req = httpRequest({ host: url.hostname, port: url.port, method: route.method, path: url.pathname, headers }, (res) => {
      const parts: Buffer[] = []
      res.on('data', (c: Buffer) => parts.push(c))
      res.on('end', () => {
        resolve({ status: res.statusCode ?? 0, body: Buffer.concat(parts).toString('utf8') })
        req.destroy()
      })
    })
    // The server may answer and stop reading before the body is through: that is the point.
    req.on('error', (error: NodeJS.ErrnoException) => (error.code === 'EPIPE' || error.code === 'ECONNRESET' ? undefined : reject(error)))
    const piece = Buffer.alloc(opts.chunk, 0x61)
    if (!opts.chunked) {
      // Only a first piece of what the length announces: a route that waited for the whole body would never answer.
      req.write(piece)
      return
    }
    let sent = 0
    const pump = () => {
      while (sent < opts.size) {
        sent += piece.length
        if (!req.write(piece)) return void req.once('drain', pump)
      }
      req.end()
    }
    pump()
  })
}

describe('every route that takes a body, with an oversize one', () => {
  let cookie = ''
  beforeAll(async () => {
    const user = await makeUser({ role: 'admin' })
    cookie = (await new ApiClient().login(user.email, FACTORY_PASSWORD)).cookie
  })

  it.each(listApiRoutes().filter(r => r.method !== 'GET').map(r => ({ ...r, key: routeKey(r) })))(`$key answers ${OVERSIZE_RUNS} oversize bodies with 413`, async (route) => {
    const limit = limitOf(route.key)
    const failures: string[] = []
    const multipart = limit > 4 * MB
    // Chunked bodies have to be sent whole up to the limit: the two upload routes get fewer of those.
    const chunkedRuns = multipart ? 3 : OVERSIZE_RUNS
    let chunkedSoFar = 0
    const cases = fc.record({
      chunked: fc.boolean(),
      over: fc.integer({ min: 1, max: limit }),
      chunk: fc.integer({ min: 512, max: 256 * 1024 }),
      type: fc.constantFrom('application/json', 'multipart/form-data; boundary=x', 'text/plain'),
    })
    await fc.assert(fc.asyncProperty(cases, async (c) => {
      const chunked = c.chunked && chunkedSoFar++ < chunkedRuns
      const size = chunked ? limit + Math.min(c.over, 64 * 1024) : limit + c.over
      // An upload route reads its body as the file, in its own type; sent as anything else it answers 415 unread.
      const type = chunked && multipart ? 'multipart/form-data; boundary=x' : c.type
      const res = await oversize(route, route.path.startsWith('/api/auth/') ? '' : cookie, { chunked, size, chunk: c.chunk, type })
      let parsed: { statusCode?: number } = {}
      try {
        parsed = JSON.parse(res.body) as { statusCode?: number }
      }
      catch { /* not JSON: reported below */ }
      const ok = res.status === 413 && parsed.statusCode === 413
      if (!ok) failures.push(`${route.key} ${chunked ? 'chunked' : 'declared'} ${size} B → ${res.status} ${res.body.slice(0, 200)}`)
      return ok
    }), { numRuns: OVERSIZE_RUNS, endOnFailure: true })
    expect(failures).toEqual([])
  }, 300_000)
})
