import { createServer, type Server } from 'node:http'
import type { AddressInfo } from 'node:net'
import { createApp, createRouter, defineEventHandler, toNodeListener } from 'h3'
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest'
import errorHandler from '../../server/error-handler'
import { conflict, invalid } from '../../server/services/errors'
import { DEMO, signedIn } from '../helpers/api'

const GENERIC_500 = 'Something went wrong on the server; the error was logged.'

describe('domain errors through the running app', () => {
  it('answers a service\'s invalid-input error with 422, its message and the failing fields, and nothing else', async () => {
    const tech = await signedIn(DEMO.technician)
    const res = await tech.post('/api/records', { deviceType: 'no-such-device-type', symptoms: ['flickers'] })
    expect(res.status).toBe(422)
    expect(res.body).toEqual({
      statusCode: 422,
      message: 'Unknown device type "no-such-device-type".',
      data: { fields: { deviceType: 'unknown device type' } },
    })
    expect(res.headers.get('content-type')).toMatch(/^application\/json/)
  })

  it('answers a not-found error with 404 and no data', async () => {
    const res = await (await signedIn(DEMO.technician)).get('/api/records/987654321')
    expect(res.status).toBe(404)
    expect(res.body).toEqual({ statusCode: 404, message: 'No such repair record.' })
  })
})

/**
 * The same error handler behind h3 itself, with routes that throw the way services do: h3 wraps
 * any error that is not its own into one whose `cause` is the original (h3 1.x `createError`),
 * and the handler must find a domain error there, and must not show an unexpected one.
 */
describe('the error handler behind h3', () => {
  let server: Server
  let base = ''
  const logged = vi.spyOn(console, 'error').mockImplementation(() => undefined)

  beforeAll(async () => {
    const router = createRouter()
      .get('/api/invalid', defineEventHandler(async () => {
        throw invalid('The reading is outside what the meter can show.', { value: 'over range' })
      }))
      .get('/api/conflict', defineEventHandler(async () => {
        throw conflict('This draft was saved elsewhere meanwhile.', { current: { version: 3 } })
      }))
      .get('/api/unexpected', defineEventHandler(async () => {
        throw new TypeError('cannot read properties of undefined (reading \'passwordHash\') at /srv/internal.ts:12')
      }))
    const app = createApp({ onError: (error, event) => errorHandler(error, event, { defaultHandler: () => ({ status: 500, statusText: '', headers: {}, body: '' }) }) })
    app.use(router)
    server = createServer(toNodeListener(app))
    await new Promise<void>(resolve => server.listen(0, '127.0.0.1', resolve))
    base = `http://127.0.0.1:${(server.address() as AddressInfo).port}`
  })

  afterAll(async () => {
    logged.mockRestore()
    await new Promise(resolve => server.close(resolve))
  })

  it('answers a thrown domain error with its status, message and fields', async () => {
    const res = await fetch(`${base}/api/invalid`)
    expect(res.status).toBe(422)
    expect(await res.json()).toEqual({
      statusCode: 422,
      message: 'The reading is outside what the meter can show.',
      data: { fields: { value: 'over range' } },
    })
  })

  it('passes the data of a conflict through (the current version for the editor)', async () => {
    const res = await fetch(`${base}/api/conflict`)
    expect(res.status).toBe(409)
    expect(await res.json()).toEqual({ statusCode: 409, message: 'This draft was saved elsewhere meanwhile.', data: { current: { version: 3 } } })
  })

  it('answers an unexpected error with a plain 500 that shows no internals, and logs it', async () => {
    logged.mockClear()
    const res = await fetch(`${base}/api/unexpected`)
    expect(res.status).toBe(500)
    const text = await res.text()
    expect(JSON.parse(text)).toMatchObject({ statusCode: 500, message: GENERIC_500 })
    expect(JSON.parse(text)).not.toHaveProperty('data')
    expect(text).not.toMatch(/passwordHash|internal\.ts|TypeError|stack/)
    expect(logged).toHaveBeenCalledOnce()
  })
})
