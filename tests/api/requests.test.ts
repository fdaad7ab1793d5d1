import { request as httpRequest } from 'node:http'
import { describe, expect, it } from 'vitest'
import { ApiClient, DEMO, signedIn } from '../helpers/api'
import { BASE_URL } from '../helpers/browser'

// What every request meets before its route runs: the body limit (OWASP ASVS 5.0 V13: bounded
// input), the cross-site checks for unsafe methods (OWASP CSRF cheat sheet: Origin, then
// Sec-Fetch-Site, then Referer, against the configured origin), JSON-only bodies, and the
// headers of API answers and pages.

const JSON_LIMIT = 256 * 1024

/** A raw HTTP request, for what fetch will not send: a chosen Host header, a chunked body. */
function raw(opts: { method: string, path: string, headers?: Record<string, string>, body?: Buffer, chunks?: Buffer[] }): Promise<{ status: number, headers: Record<string, string | string[] | undefined>, text: string }> {
  const url = new URL(BASE_URL)
  return new Promise((resolve, reject) => {
    const req = httpRequest({ host: url.hostname, port: url.port, method: opts.method, path: opts.path, headers: opts.headers }, (res) => {
      const parts: Buffer[] = []
      res.on('data', (c: Buffer) => parts.push(c))
      res.on('end', () => resolve({ status: res.statusCode ?? 0, headers: res.headers, text: Buffer.concat(parts).toString('utf8') }))
    })
    req.on('error', reject)
    if (opts.chunks) {
      for (const c of opts.chunks) req.write(c)
      req.end()
    }
    else req.end(opts.body)
  })
}

describe('request bodies', () => {
  it('refuses a 20 MB JSON body with 413 naming the limit, before the route reads it', async () => {
    const admin = await signedIn(DEMO.admin)
    const body = JSON.stringify({ name: 'x'.repeat(20 * 1024 * 1024) })
    const res = await admin.patch('/api/symptoms/1', body)
    expect(res.status).toBe(413)
    expect(res.body).toMatchObject({ statusCode: 413, data: { fields: { body: 'too large' } } })
    expect(res.body.message).toMatch(/256 KB/)
  })

  it('refuses a body sent without a length (chunked) once it passes the limit', async () => {
    const admin = await signedIn(DEMO.admin)
    const chunk = Buffer.from(`"${'y'.repeat(64 * 1024)}",`)
    const chunks = [Buffer.from('{"synonyms":['), ...Array.from({ length: 8 }, () => chunk), Buffer.from('"z"]}')]
    const res = await raw({ method: 'PATCH', path: '/api/symptoms/1', headers: { 'cookie': admin.cookie, 'content-type': 'application/json', 'transfer-encoding': 'chunked' }, chunks })
    expect(res.status).toBe(413)
    expect(JSON.parse(res.text)).toMatchObject({ statusCode: 413 })
  })

  it('still takes a chunked body under the limit', async () => {
    const res = await raw({ method: 'POST', path: '/api/readings/evaluate', headers: { 'cookie': (await signedIn(DEMO.technician)).cookie, 'content-type': 'application/json', 'transfer-encoding': 'chunked' }, chunks: [Buffer.from('{"value":"4k7",'), Buffer.from('"spec":{"quantity":"resistance","unit":"Ω","nominal":4700,"tolerancePct":5}}')] })
    expect(res.status, res.text).toBe(200)
  })

  it('lets a whole revision through up to its own, larger limit', async () => {
    const author = await signedIn(DEMO.author)
    // 16 steps of 19,000 characters: over the general limit, each step within its own.
    const steps = Array.from({ length: 16 }, (_, i) => ({ key: `s${i}`, title: `Step ${i}`, instruction: 'word '.repeat(3800) }))
    const body = JSON.stringify({ content: { title: 'Large body check', steps } })
    expect(body.length).toBeGreaterThan(JSON_LIMIT)
    const big = await author.post('/api/procedures', body)
    expect(big.status, JSON.stringify(big.body).slice(0, 300)).toBe(201)
  })

  it('takes JSON only: a form-encoded sign-in is refused with 415', async () => {
    const res = await fetch(`${BASE_URL}/api/auth/login`, {
      method: 'POST',
      headers: { 'content-type': 'application/x-www-form-urlencoded' },
      body: new URLSearchParams({ email: DEMO.technician, password: 'bench-demo-2026' }).toString(),
    })
    expect(res.status).toBe(415)
    expect(res.headers.get('set-cookie')).toBeNull()
    const plain = await fetch(`${BASE_URL}/api/auth/login`, { method: 'POST', headers: { 'content-type': 'text/plain' }, body: JSON.stringify({ email: DEMO.technician, password: 'bench-demo-2026' }) })
    expect(plain.status).toBe(415)
  })
})

describe('cross-site requests', () => {
  it('refuses an unsafe request with no Origin but a foreign Referer', async () => {
    const admin = await signedIn(DEMO.admin)
    const res = await admin.post('/api/users/invite', { email: 'referer@test.example', role: 'technician' }, { referer: 'http://evil.example/page' })
    expect(res.status).toBe(403)
    const own = await admin.post('/api/users/invite', { email: 'not-an-email', role: 'technician' }, { referer: `${BASE_URL}/admin/users` })
    expect(own.status).toBe(400)
  })

  it('takes its own origin from configuration, never from the Host header', async () => {
    const admin = await signedIn(DEMO.admin)
    const res = await raw({
      method: 'POST',
      path: '/api/users/invite',
      headers: { 'host': 'evil.example', 'origin': 'http://evil.example', 'cookie': admin.cookie, 'content-type': 'application/json' },
      body: Buffer.from(JSON.stringify({ email: 'host-header@test.example', role: 'admin' })),
    })
    expect(res.status).toBe(403)
  })
})

describe('headers', () => {
  it('marks every API answer, signed in or not, as not to be stored', async () => {
    const tech = await signedIn(DEMO.technician)
    for (const path of ['/api/me', '/api/records?pageSize=1', '/api/procedures', '/api/dashboard']) {
      const res = await tech.get(path)
      expect(res.status, path).toBe(200)
      expect(res.headers.get('cache-control'), path).toBe('no-store')
      expect(res.headers.get('x-powered-by'), path).toBeNull()
    }
    expect((await new ApiClient().get('/api/health')).headers.get('cache-control')).toBe('no-store')
  })

  it('sends pages with a nonce-based Content-Security-Policy, no-store, and no framework banner', async () => {
    const res = await fetch(`${BASE_URL}/login`)
    expect(res.status).toBe(200)
    const policy = res.headers.get('content-security-policy') ?? ''
    const nonce = policy.match(/'nonce-([^']+)'/)?.[1]
    expect(nonce, policy).toBeTruthy()
    expect(policy).toMatch(/script-src 'self' 'nonce-[^']+'(;|$)/)
    expect(policy).not.toMatch(/script-src[^;]*unsafe-inline/)
    expect(policy).toMatch(/frame-ancestors 'none'/)
    expect(policy).toMatch(/object-src 'none'/)
    expect(res.headers.get('cache-control')).toBe('no-store')
    expect(res.headers.get('x-powered-by')).toBeNull()
    const html = await res.text()
    // Every inline script and style element Nuxt wrote carries this response's nonce.
    const inline = [...html.matchAll(/<(script|style)\b([^>]*)>/g)].filter(m => !/\bsrc=/.test(m[2]!))
    expect(inline.length).toBeGreaterThan(0)
    for (const m of inline) expect(m[2], m[0]).toContain(`nonce="${nonce}"`)
    const again = (await fetch(`${BASE_URL}/login`)).headers.get('content-security-policy')
    expect(again).not.toBe(policy)
  })
})

describe('methods a route does not serve', () => {
  it.each(['/api/uploads', '/api/readings/evaluate', '/api/users/invite', '/api/auth/login'])('GET %s answers a JSON 404, not the sign-in page', async (path) => {
    const res = await new ApiClient().get(path)
    expect(res.status).toBe(404)
    expect(res.headers.get('content-type')).toMatch(/application\/json/)
    expect(res.body).toMatchObject({ statusCode: 404 })
  })
})
