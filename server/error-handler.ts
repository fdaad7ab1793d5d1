import type { NitroErrorHandler } from 'nitropack/types'
import { getRequestURL, send, setResponseHeader, setResponseStatus } from 'h3'
import { HTTP_STATUS, isDomainError, type DomainError } from './services/errors'

const DB_DOWN = /Sequelize(Connection|ConnectionRefused|ConnectionAcquireTimeout|HostNotReachable|ConnectionTimedOut|AccessDenied)Error|ER_GET_CONNECTION_TIMEOUT|ER_CONNECTION_TIMEOUT|ER_SOCKET_UNEXPECTED_CLOSE|ER_CONNECTION_ALREADY_CLOSED/i

function unavailableCause(error: unknown): string | null {
  let e: unknown = error
  for (let depth = 0; e && depth < 5; depth++) {
    const err = e as { name?: string, message?: string, code?: string, fatal?: boolean, sqlState?: string, cause?: unknown, original?: unknown }
    if (err.name === 'ObjectStoreUnavailable') return 'object store'
    if (DB_DOWN.test(`${err.name ?? ''} ${err.code ?? ''}`)) return 'database'
    // The mariadb driver marks the loss of the connection itself as fatal (a server that went
    // away mid-query: ECONNRESET, EPIPE…); the statement may succeed on a fresh connection.
    if (err.fatal === true && typeof err.sqlState === 'string') return 'database'
    e = err.cause ?? err.original
  }
  return null
}

/** A domain error thrown by a service reaches here wrapped by h3 as its `cause`. */
function domainErrorOf(error: unknown): DomainError | null {
  let e: unknown = error
  for (let depth = 0; e && depth < 3; depth++) {
    if (isDomainError(e)) return e
    e = (e as { cause?: unknown }).cause
  }
  return null
}

/**
 * API errors are JSON `{ statusCode, statusMessage, message, data }`. An unreachable dependency
 * is a 503 that names it; an unexpected error is a 500 without internals. Pages fall through to
 * Nuxt's own error page.
 */
const handler: NitroErrorHandler = async (error, event) => {
  const url = getRequestURL(event)
  if (!url.pathname.startsWith('/api/') && url.pathname !== '/api') return
  const down = unavailableCause(error)
  const domain = domainErrorOf(error)
  let statusCode = domain ? HTTP_STATUS[domain.kind] : error.statusCode ?? 500
  let message = domain ? domain.message : error.message
  let statusMessage = domain ? undefined : error.statusMessage
  if (domain) {
    if (domain.kind === 'unavailable') setResponseHeader(event, 'Retry-After', 5)
  }
  else if (down) {
    statusCode = 503
    statusMessage = 'Service Unavailable'
    message = `The ${down} is not reachable right now; try again in a moment.`
  }
  else if (statusCode >= 500 && error.unhandled) {
    console.error('[benchlore] unhandled error on', event.method, url.pathname, error.cause ?? error)
    message = 'Something went wrong on the server; the error was logged.'
  }
  const data = domain ? domain.data : statusCode < 500 || down ? error.data : undefined
  setResponseStatus(event, statusCode, statusMessage)
  setResponseHeader(event, 'Content-Type', 'application/json; charset=utf-8')
  setResponseHeader(event, 'Cache-Control', 'no-store')
  if (down) setResponseHeader(event, 'Retry-After', 5)
  return send(event, JSON.stringify({ statusCode, statusMessage, message, data }))
}

export default handler
