// What an API error from $fetch or useFetch carries (server/error-handler.ts shapes it): a
// status, a message, the fields that were wrong, and for some refusals more (the version now on
// the server for a stale save, the open draft for a second one). Every page reads errors
// through these, so the shape is known in one place.

interface ApiError {
  statusCode?: number
  status?: number
  data?: { message?: string, data?: { fields?: Record<string, string>, current?: unknown, revisionId?: number, code?: string, columns?: unknown } }
}

const asApiError = (error: unknown): ApiError => (error && typeof error === 'object' ? error as ApiError : {})

/** The HTTP status of a failed request; undefined when the server was not reached. */
export function apiErrorStatus(error: unknown): number | undefined {
  const e = asApiError(error)
  return e.statusCode ?? e.status
}

export function apiErrorMessage(error: unknown, fallback: string): string {
  return asApiError(error).data?.message ?? fallback
}

export function apiErrorFields(error: unknown): Record<string, string> {
  return asApiError(error).data?.data?.fields ?? {}
}

/** What else the server said about a refusal (`data.data`), e.g. the open draft's `revisionId`. */
export function apiErrorDetail(error: unknown): NonNullable<NonNullable<ApiError['data']>['data']> {
  return asApiError(error).data?.data ?? {}
}

/**
 * Why an autosave failed: a conflict (409 with the server's current version, which the caller
 * keeps beside its own), or a message to show (the server could not be reached, or said why).
 */
export function saveFailure<T>(error: unknown): { current: T } | { message: string, fields: Record<string, string> } {
  const code = apiErrorStatus(error)
  const current = apiErrorDetail(error).current
  if (code === 409 && current) return { current: current as T }
  return {
    message: code === undefined ? 'The server could not be reached.' : apiErrorMessage(error, `The server answered ${code}.`),
    fields: apiErrorFields(error),
  }
}

/** The route's own name for what went wrong (`data.code`, e.g. TOO_FEW_CYCLES), when it gave one. */
export function apiErrorCode(error: unknown): string | undefined {
  const code = apiErrorDetail(error).code
  return typeof code === 'string' ? code : undefined
}
