export type HealthPart = 'ok' | 'down'

/** GET /api/health: 200 with status ok, or 503 naming what is failing. */
export type HealthDto
  = | { status: 'ok', db: HealthPart, storage: HealthPart, mail: HealthPart }
    | { status: 'degraded', db: HealthPart, storage: HealthPart, mail: HealthPart, failing: string[] }
