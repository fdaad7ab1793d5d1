import { describe, expect, it } from 'vitest'
import { ApiClient, DEMO } from '../helpers/api'
import { services, waitUntil } from '../helpers/stack'

describe('/api/health and outages', () => {
  it('reports every part ok', async () => {
    const res = await new ApiClient().get('/api/health')
    expect(res.status).toBe(200)
    expect(res.body).toEqual({ status: 'ok', db: 'ok', storage: 'ok', mail: 'ok' })
  })

  it('answers 503 naming the database while MariaDB is stopped, and 200 again after it is back, without an app restart', async () => {
    const client = new ApiClient()
    const appPid = services.appPid()
    expect(appPid, 'the test stack records the app\'s process id').toBeTruthy()
    await services.stopDatabase()
    try {
      const health = await client.get('/api/health')
      expect(health.status).toBe(503)
      expect(health.body).toMatchObject({ db: 'down', failing: ['db'] })
      const login = await client.post('/api/auth/login', { email: DEMO.technician, password: 'bench-demo-2026' })
      expect(login.status).toBe(503)
      expect(login.body.message).toMatch(/database/)
    }
    finally {
      await services.startDatabase()
    }
    // Every answer from the restart of the database to the first 200: while the app reconnects
    // it keeps answering, and only 503.
    const seen: number[] = []
    await waitUntil('health back to 200', async () => {
      seen.push((await client.get('/api/health')).status)
      return seen.at(-1) === 200
    }, 10_000)
    expect(seen.filter(s => s !== 200).every(s => s === 503), `answers while reconnecting: ${seen.join(', ')}`).toBe(true)
    expect((await client.post('/api/auth/login', { email: DEMO.technician, password: 'bench-demo-2026' })).status).toBe(200)
    expect(services.appPid(), 'the same app process answered before, during and after the outage').toBe(appPid)
  })

  it('names the object store and the mail server when they are down', async () => {
    await services.stopObjectStore()
    await services.stopMail()
    try {
      const res = await new ApiClient().get('/api/health')
      expect(res.status).toBe(503)
      expect(res.body).toMatchObject({ db: 'ok', storage: 'down', mail: 'down' })
    }
    finally {
      await services.startObjectStore()
      await services.startMail()
    }
    await waitUntil('health back to 200', async () => (await new ApiClient().get('/api/health')).status === 200, 10_000)
  })
})
