/**
 * What can go wrong in the domain, said in the domain's words. Services throw these and never
 * import h3; `server/error-handler.ts` is the one place that turns them into HTTP answers
 * (`HTTP_STATUS` below), so a status code is chosen once per kind, not at each call site.
 *
 * @example
 *   throw notFound('procedure')
 *   throw invalid('the file has no numeric columns', { file: 'no numeric columns' })
 *   throw conflict('This draft was saved elsewhere.', { current })
 */
export type DomainErrorKind
  = | 'invalid' // the input breaks a rule: names the failing fields
    | 'unauthenticated' // who is asking is unknown or their session ended
    | 'forbidden' // known, but not allowed
    | 'not_found' // absent, or hidden from this user (a draft to a technician)
    | 'conflict' // the state moved on (stale version, wrong revision state)
    | 'gone' // existed once and is used up (an accepted or expired invitation)
    | 'too_large' // over a stated size
    | 'unsupported' // a file type that is not accepted
    | 'throttled' // too many attempts; try later
    | 'unavailable' // a dependency is away or not ready; try again

export const HTTP_STATUS: Readonly<Record<DomainErrorKind, number>> = {
  invalid: 422,
  unauthenticated: 401,
  forbidden: 403,
  not_found: 404,
  conflict: 409,
  gone: 410,
  too_large: 413,
  unsupported: 415,
  throttled: 429,
  unavailable: 503,
}

export interface DomainErrorData {
  /** Failing field path (dots, e.g. `steps.2.verdicts.low.next`) → reason. */
  fields?: Record<string, string>
  [key: string]: unknown
}

/**
 * Never give one a `cause`: h3 wraps a thrown error as `cause: error.cause || error`, so the
 * error handler would find the cause instead of this error and answer 500.
 */
export class DomainError extends Error {
  override name = 'DomainError'
  constructor(readonly kind: DomainErrorKind, message: string, readonly data?: DomainErrorData) {
    super(message)
  }
}

export const isDomainError = (e: unknown): e is DomainError => e instanceof DomainError

export const invalid = (message: string, fields?: Record<string, string>, data?: DomainErrorData) =>
  new DomainError('invalid', message, fields || data ? { ...data, ...(fields ? { fields } : {}) } : undefined)
export const notFound = (what: string) => new DomainError('not_found', `No such ${what}.`)
export const forbidden = (message: string) => new DomainError('forbidden', message)
export const conflict = (message: string, data?: DomainErrorData) => new DomainError('conflict', message, data)
export const gone = (message: string) => new DomainError('gone', message)
export const tooLarge = (message: string, fields?: Record<string, string>) => new DomainError('too_large', message, fields ? { fields } : undefined)
export const unsupported = (message: string, fields?: Record<string, string>) => new DomainError('unsupported', message, fields ? { fields } : undefined)
export const unauthenticated = (message: string) => new DomainError('unauthenticated', message)
export const throttled = (message: string, data?: DomainErrorData) => new DomainError('throttled', message, data)
export const unavailable = (message: string) => new DomainError('unavailable', message)
