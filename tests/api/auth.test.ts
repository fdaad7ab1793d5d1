import { afterAll, describe, expect, it } from 'vitest'
import { THROTTLE } from '../../server/services/accounts/throttling'
import { ApiClient, DEMO, DEMO_PASSWORD, signedIn } from '../helpers/api'
import { clearLoginFailures, FACTORY_PASSWORD, makeUser } from '../helpers/db'

afterAll(clearLoginFailures)

describe('sign-in', () => {
  it('signs in each demo account with the role it names', async () => {
    for (const [role, email] of Object.entries(DEMO)) {
      const client = new ApiClient()
      const res = await client.post('/api/auth/login', { email, password: DEMO_PASSWORD })
      expect(res.status).toBe(200)
      expect(res.body.user).toMatchObject({ email, role })
      expect(Object.keys(res.body.user).sort()).toEqual(['email', 'id', 'name', 'role'])
      expect(client.cookie.length).toBeGreaterThan(20)
      // ASVS 5.0 V7: the session cookie holds only ids and role, far below the 4 KB limit.
      expect(client.cookie.length).toBeLessThan(1024)
      expect((await client.get('/api/me')).body.user.email).toBe(email)
    }
  })

  it('gives the same 401 for a wrong password and an unknown e-mail', async () => {
    const wrong = await new ApiClient().post('/api/auth/login', { email: DEMO.technician, password: 'not-the-password' })
    const unknown = await new ApiClient().post('/api/auth/login', { email: 'nobody-here@harbourlane.example', password: 'not-the-password' })
    expect(wrong.status).toBe(401)
    expect(unknown.status).toBe(401)
    expect(unknown.body.message).toBe(wrong.body.message)
    await clearLoginFailures()
  })

  it('refuses a deactivated account like a wrong password', async () => {
    const user = await makeUser({ active: false })
    const res = await new ApiClient().post('/api/auth/login', { email: user.email, password: FACTORY_PASSWORD })
    expect(res.status).toBe(401)
    await clearLoginFailures()
  })

  it('throttles an account after repeated failures with a clear 429, even for the right password', async () => {
    const user = await makeUser()
    for (let i = 0; i < THROTTLE.perAccount; i++) {
      const res = await new ApiClient().post('/api/auth/login', { email: user.email, password: `wrong-${i}-password` })
      expect(res.status).toBe(401)
    }
    const blocked = await new ApiClient().post('/api/auth/login', { email: user.email, password: FACTORY_PASSWORD })
    expect(blocked.status).toBe(429)
    expect(blocked.body.message).toMatch(/Too many failed sign-ins/)
    await clearLoginFailures()
    expect((await new ApiClient().post('/api/auth/login', { email: user.email, password: FACTORY_PASSWORD })).status).toBe(200)
  })

  it('throttles a client address across accounts', async () => {
    for (let i = 0; i < THROTTLE.perIp; i++) {
      await new ApiClient().post('/api/auth/login', { email: `spray-${i}@test.example`, password: 'guess-guess-guess' })
    }
    const res = await new ApiClient().post('/api/auth/login', { email: DEMO.technician, password: DEMO_PASSWORD })
    expect(res.status).toBe(429)
    await clearLoginFailures()
  })

  it('names the failing field when the body is incomplete', async () => {
    const res = await new ApiClient().post('/api/auth/login', { email: 'not-an-address' })
    expect(res.status).toBe(400)
    expect(res.body.data.fields).toMatchObject({ email: expect.any(String), password: expect.any(String) })
  })
})

describe('sessions end on the server', () => {
  it('a copied cookie stops working after sign-out', async () => {
    const user = await makeUser()
    const client = await new ApiClient().login(user.email, FACTORY_PASSWORD)
    const copy = new ApiClient()
    copy.cookie = client.cookie
    expect((await copy.get('/api/me')).status).toBe(200)
    expect((await client.post('/api/auth/logout')).status).toBe(200)
    expect((await client.get('/api/me')).status).toBe(401)
    expect((await copy.get('/api/me')).status).toBe(401)
  })

  it('deactivation ends the session at the next request', async () => {
    const user = await makeUser()
    const client = await new ApiClient().login(user.email, FACTORY_PASSWORD)
    const admin = await signedIn(DEMO.admin)
    expect((await admin.patch(`/api/users/${user.id}`, { active: false })).status).toBe(200)
    expect((await client.get('/api/me')).status).toBe(401)
    expect((await admin.patch(`/api/users/${user.id}`, { active: true })).status).toBe(200)
    expect((await client.get('/api/me')).status).toBe(401)
    expect((await new ApiClient().login(user.email, FACTORY_PASSWORD)).cookie).not.toBe('')
  })

  it('a server-rendered page knows the signed-in person, and renders an ended session as signed out', async () => {
    const user = await makeUser({ name: 'Page Session Tester' })
    const client = await new ApiClient().login(user.email, FACTORY_PASSWORD)
    const page = await client.request('GET', '/', undefined, { accept: 'text/html' })
    expect(page.status).toBe(200)
    expect(page.body).toContain('Page Session Tester')
    // The payload carries the session's claim and the person, nothing more (no hash, no e-mail of others).
    expect(page.body).not.toContain('scrypt')
    const admin = await signedIn(DEMO.admin)
    expect((await admin.patch(`/api/users/${user.id}`, { active: false })).status).toBe(200)
    const after = await client.request('GET', '/', undefined, { accept: 'text/html' })
    expect(after.status).toBe(302)
    expect(after.headers.get('location')).toMatch(/^\/login/)
    expect(String(after.body)).not.toContain('Page Session Tester')
  })

  it('a role change ends the session, and the new role applies after signing in again', async () => {
    const user = await makeUser({ role: 'technician' })
    const client = await new ApiClient().login(user.email, FACTORY_PASSWORD)
    expect((await client.get('/api/users')).status).toBe(403)
    const admin = await signedIn(DEMO.admin)
    expect((await admin.patch(`/api/users/${user.id}`, { role: 'admin' })).status).toBe(200)
    expect((await client.get('/api/users')).status).toBe(401)
    const again = await new ApiClient().login(user.email, FACTORY_PASSWORD)
    expect((await again.get('/api/users')).status).toBe(200)
    expect((await admin.patch(`/api/users/${user.id}`, { role: 'technician', active: false })).status).toBe(200)
  })
})
