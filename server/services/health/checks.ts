import type { Transporter } from 'nodemailer'
import { QueryTypes } from 'sequelize'
import type { HealthPart } from '../../../shared/types/health'
import { useDb } from '../../db'
import type { ObjectStore } from '../storage'

const CHECK_MS = 2500

const within = <T>(p: Promise<T>, ms: number) =>
  Promise.race([p, new Promise<never>((_, reject) => setTimeout(() => reject(new Error('timeout')), ms))])

const check = (p: () => Promise<unknown>): Promise<HealthPart> => within(p(), CHECK_MS).then(() => 'ok' as const, () => 'down' as const)

/** Whether the database, the bucket and the SMTP relay answer, each within 2.5 s, checked at once. */
export async function checkDependencies(deps: { store: ObjectStore, transport: Transporter }): Promise<{ db: HealthPart, storage: HealthPart, mail: HealthPart }> {
  const [db, storage, mail] = await Promise.all([
    check(() => useDb().query('SELECT 1 AS ok', { type: QueryTypes.SELECT })),
    check(() => deps.store.ping()),
    check(() => deps.transport.verify()),
  ])
  return { db, storage, mail }
}
