import { QueryTypes } from 'sequelize'
import { useDb } from '../db'

type PartState = 'ok' | 'down'

const within = <T>(p: Promise<T>, ms: number) =>
  Promise.race([p, new Promise<never>((_, reject) => setTimeout(() => reject(new Error('timeout')), ms))])

// Public on purpose (load balancers and the start script poll it); it reveals only up/down.
export default defineEventHandler(async (event) => {
  const check = (p: () => Promise<unknown>): Promise<PartState> => within(p(), 2500).then(() => 'ok' as const, () => 'down' as const)
  const [db, storage, mail] = await Promise.all([
    check(() => useDb().query('SELECT 1 AS ok', { type: QueryTypes.SELECT })),
    check(() => useObjectStore().ping()),
    check(() => useMailTransport().verify()),
  ])
  const parts = { db, storage, mail }
  const failing = Object.entries(parts).filter(([, s]) => s !== 'ok').map(([k]) => k)
  setResponseHeader(event, 'Cache-Control', 'no-store')
  if (failing.length) {
    setResponseStatus(event, 503, 'Service Unavailable')
    return { status: 'degraded', ...parts, failing }
  }
  return { status: 'ok', ...parts }
})
