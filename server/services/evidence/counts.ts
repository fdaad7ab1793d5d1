import { QueryTypes, type Transaction } from 'sequelize'
import { inTransaction, useDb } from '../../db'

// Running counts of confirmed causes (table cause_counts), per device type, cause and symptom,
// kept in step with the closed records in the transaction that closes or amends one.

interface CountRow { pid: number, ck: string, symptom: string, n: number }

/**
 * Adds (+1) or removes (−1) one closed record's confirmed cause from the running counts, inside
 * the transaction that closes or amends it. Only records with a confirmed cause count.
 */
export async function adjustCauseCounts(r: { deviceType: string, causeProcedureId: number | null, causeKey: string | null, symptoms: string[] }, delta: 1 | -1, transaction: Transaction) {
  if (!r.causeProcedureId || !r.causeKey) return
  const rows = ['', ...new Set(r.symptoms)].map(symptom => [r.deviceType, r.causeProcedureId, r.causeKey, symptom, Math.max(0, delta)])
  await useDb().query(
    `INSERT INTO cause_counts (device_type, cause_procedure_id, cause_key, symptom, n) VALUES ${rows.map(() => '(?, ?, ?, ?, ?)').join(', ')}
     ON DUPLICATE KEY UPDATE n = GREATEST(0, CAST(n AS SIGNED) + ${delta})`,
    { type: QueryTypes.INSERT, replacements: rows.flat(), transaction },
  )
}

/** Recomputes the running counts from the records (after bulk loads; also a repair tool). */
export async function rebuildCauseCounts(): Promise<void> {
  await inTransaction(async (transaction) => {
    await useDb().query('DELETE FROM cause_counts', { type: QueryTypes.DELETE, transaction })
    const closed = 'r.status = \'closed\' AND r.cause_key IS NOT NULL'
    await useDb().query(`INSERT INTO cause_counts (device_type, cause_procedure_id, cause_key, symptom, n)
      SELECT r.device_type, r.cause_procedure_id, r.cause_key, '', COUNT(*) FROM repair_records r WHERE ${closed} GROUP BY 1, 2, 3
      UNION ALL
      SELECT r.device_type, r.cause_procedure_id, r.cause_key, s.symptom, COUNT(*) FROM repair_records r JOIN record_symptoms s ON s.record_id = r.id WHERE ${closed} GROUP BY 1, 2, 3, 4`, { type: QueryTypes.INSERT, transaction })
  })
}

/**
 * Confirmed-cause counts for a device type in one aggregate query over the running counts: per
 * (procedure, cause) the closed records that confirmed it ('' row) and, of those, how many
 * listed each queried symptom.
 */
export async function confirmedCounts(deviceType: string, symptoms: string[]) {
  const rows = await useDb().query<CountRow>(
    `SELECT cause_procedure_id AS pid, cause_key AS ck, symptom, SUM(n) AS n FROM cause_counts
     WHERE device_type = :deviceType AND symptom IN (:symptoms)
     GROUP BY cause_procedure_id, cause_key, symptom`,
    { type: QueryTypes.SELECT, raw: true, replacements: { deviceType, symptoms: ['', ...symptoms] } },
  )
  const byCause = new Map<string, { confirmed: number, symptomHits: Record<string, number> }>()
  let total = 0
  for (const row of rows) {
    const id = `${row.pid}:${row.ck}`
    const entry = byCause.get(id) ?? { confirmed: 0, symptomHits: Object.fromEntries(symptoms.map(s => [s, 0])) }
    if (row.symptom === '') {
      entry.confirmed = Number(row.n)
      total += Number(row.n)
    }
    else entry.symptomHits[row.symptom] = Number(row.n)
    byCause.set(id, entry)
  }
  return { byCause, total }
}
