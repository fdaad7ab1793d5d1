import type { HealthDto } from '#shared/types/health'
import { checkDependencies } from '../services/health/checks'

// Public on purpose (load balancers and the start script poll it); it reveals only up/down.
export default defineEventHandler(async (event) => {
  const parts = await checkDependencies({ store: useObjectStore(), transport: useMailTransport() })
  const failing = Object.entries(parts).filter(([, s]) => s !== 'ok').map(([k]) => k)
  setResponseHeader(event, 'Cache-Control', 'no-store')
  if (failing.length) {
    setResponseStatus(event, 503, 'Service Unavailable')
    return { status: 'degraded', ...parts, failing } satisfies HealthDto
  }
  return { status: 'ok', ...parts } satisfies HealthDto
})
