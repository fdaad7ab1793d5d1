import { Op, QueryTypes, type Transaction } from 'sequelize'
import { rankCauses } from '../../shared/utils/evidence'
import type { EvidenceCauseDto } from '../../shared/types/records'
import { Procedure, Revision, contentPart, inTransaction, jsonArray, useDb } from '../db'

export interface CandidateCause { procedureId: number, procedureSlug: string, causeKey: string, label: string, prior: number }

/** `procedureSlug:causeKey`, the id a cause goes by across procedures. */
export const causeId = (procedureSlug: string, causeKey: string) => `${procedureSlug}:${causeKey}`

type CandidateRow = { symptoms: unknown, causes: unknown, procedure: { id: number, slug: string } }
type StoredCause = { key: string, name: string, prior: number }
/** The two parts of a revision evidence reads (built per query: the database must be open). */
const symptomsAndCauses = (): Array<[ReturnType<typeof contentPart>, string]> => [[contentPart('JSON_EXTRACT', '$.symptoms'), 'symptoms'], [contentPart('JSON_EXTRACT', '$.causes'), 'causes']]

function causesOf(row: CandidateRow): CandidateCause[] {
  return jsonArray<StoredCause>(row.causes).map(c => ({ procedureId: row.procedure.id, procedureSlug: row.procedure.slug, causeKey: c.key, label: c.name, prior: c.prior }))
}

/**
 * Causes of the published, active procedures for a device type that share a symptom (all of one
 * procedure when given). Only the symptoms and causes of each revision are read, not whole
 * procedures with their steps.
 */
export async function candidateCauses(opts: { deviceType: string, symptoms: string[], procedureId?: number }): Promise<CandidateCause[]> {
  const rows = await Revision.findAll({
    attributes: symptomsAndCauses(),
    where: opts.procedureId
      ? { state: 'published', procedureId: opts.procedureId }
      : { state: 'published', [Op.and]: [useDb().where(contentPart('JSON_VALUE', '$.deviceType'), opts.deviceType)] },
    include: [{ model: Procedure, as: 'procedure', where: { status: 'active' }, required: true, attributes: ['id', 'slug'] }],
    order: [['id', 'ASC']],
    raw: true,
    nest: true,
  }) as unknown as CandidateRow[]
  const wanted = new Set(opts.symptoms)
  const shared = (r: CandidateRow) => opts.procedureId || !wanted.size || jsonArray<string>(r.symptoms).some(s => wanted.has(s))
  return rows.filter(shared).flatMap(causesOf)
}

/**
 * An active procedure's live revision, as far as evidence needs it: its device type, symptoms and
 * causes, in one query that reads only those parts of the content.
 */
export async function liveProcedureFacts(slug: string): Promise<{ procedureId: number, deviceType: string, symptoms: string[], causes: CandidateCause[] } | null> {
  // A procedure has one published revision at a time: the live one (earlier ones are superseded).
  const row = await Revision.findOne({
    attributes: [[contentPart('JSON_VALUE', '$.deviceType'), 'deviceType'], ...symptomsAndCauses()],
    where: { state: 'published' },
    include: [{ model: Procedure, as: 'procedure', where: { slug, status: 'active' }, required: true, attributes: ['id', 'slug'] }],
    raw: true,
    nest: true,
  }) as unknown as (CandidateRow & { deviceType: string }) | null
  if (!row) return null
  return { procedureId: row.procedure.id, deviceType: row.deviceType, symptoms: jsonArray<string>(row.symptoms), causes: causesOf(row) }
}

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

/**
 * Causes ranked by naive Bayes over the team's confirmed records (formula in shared/utils/evidence.ts).
 * `candidates`, when the caller has them already (one procedure's causes), saves reading them again.
 */
export async function evidenceFor(opts: { deviceType: string, symptoms: string[], procedureId?: number, candidates?: CandidateCause[] }): Promise<{ data: EvidenceCauseDto[], totalRecords: number }> {
  const [candidates, counts] = await Promise.all([opts.candidates ?? candidateCauses(opts), confirmedCounts(opts.deviceType, opts.symptoms)])
  const seen = new Set<string>()
  const unique = candidates.filter(c => !seen.has(`${c.procedureId}:${c.causeKey}`) && seen.add(`${c.procedureId}:${c.causeKey}`))
  if (!unique.length) return { data: [], totalRecords: counts.total }
  const byId = new Map(unique.map(c => [causeId(c.procedureSlug, c.causeKey), c]))
  const ranked = rankCauses({
    causes: unique.map((c) => {
      const found = counts.byCause.get(`${c.procedureId}:${c.causeKey}`)
      return { id: causeId(c.procedureSlug, c.causeKey), label: c.label, prior: c.prior, confirmed: found?.confirmed ?? 0, symptomHits: found?.symptomHits ?? {} }
    }),
    symptoms: opts.symptoms,
    totalRecords: counts.total,
  })
  return {
    totalRecords: counts.total,
    data: ranked.map((r) => {
      const c = byId.get(r.id)!
      return { id: r.id, procedureSlug: c.procedureSlug, causeKey: c.causeKey, label: r.label, posterior: r.posterior, confirmed: r.confirmed, of: r.of, support: r.support }
    }),
  }
}
