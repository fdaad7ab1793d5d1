// What an API error from $fetch carries (server/error-handler.ts shapes it): a message, the
// fields that were wrong, and for a stale save the version now on the server.

interface ApiError { statusCode?: number, status?: number, data?: { message?: string, data?: { fields?: Record<string, string>, current?: unknown } } }

export function apiErrorMessage(error: unknown, fallback: string): string {
  return (error as ApiError).data?.message ?? fallback
}

export function apiErrorFields(error: unknown): Record<string, string> {
  return (error as ApiError).data?.data?.fields ?? {}
}

/**
 * Why an autosave failed: a conflict (409 with the server's current version, which the caller
 * keeps beside its own), or a message to show (the server could not be reached, or said why).
 */
export function saveFailure<T>(error: unknown): { current: T } | { message: string, fields: Record<string, string> } {
  const e = error as ApiError
  const code = e.statusCode ?? e.status
  const current = e.data?.data?.current
  if (code === 409 && current) return { current: current as T }
  return {
    message: code === undefined ? 'The server could not be reached.' : apiErrorMessage(error, `The server answered ${code}.`),
    fields: apiErrorFields(error),
  }
}
