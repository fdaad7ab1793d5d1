import { Op, QueryTypes } from 'sequelize'
import { rankCauses } from '../../shared/utils/evidence'
import type { EvidenceCauseDto } from '../../shared/types/records'
import { Procedure, Revision, useDb } from '../db'

export interface CandidateCause { procedureId: number, procedureSlug: string, causeKey: string, label: string, prior: number }

/** `procedureSlug:causeKey`, the id a cause goes by across procedures. */
export const causeId = (procedureSlug: string, causeKey: string) => `${procedureSlug}:${causeKey}`

/** Causes of the published, active procedures for a device type that share a symptom (all of one procedure when given). */
export async function candidateCauses(opts: { deviceType: string, symptoms: string[], procedureId?: number }): Promise<CandidateCause[]> {
  const sequelize = useDb()
  const rows = await Revision.findAll({
    where: opts.procedureId
      ? { state: 'published', procedureId: opts.procedureId }
      : { state: 'published', [Op.and]: [sequelize.where(sequelize.fn('JSON_VALUE', sequelize.col('content'), sequelize.literal("'$.deviceType'")), opts.deviceType)] },
    include: [{ model: Procedure, as: 'procedure', where: { status: 'active' }, required: true, attributes: ['id', 'slug'] }],
  })
  const wanted = new Set(opts.symptoms)
  const out: CandidateCause[] = []
  for (const r of rows) {
    if (!opts.procedureId && wanted.size && !r.content.symptoms.some(s => wanted.has(s))) continue
    const proc = (r as Revision & { procedure: Procedure }).procedure
    for (const c of r.content.causes) out.push({ procedureId: proc.id, procedureSlug: proc.slug, causeKey: c.key, label: c.name, prior: c.prior })
  }
  return out
}

interface CountRow { pid: number, ck: string, n: number, [symptom: `s${number}`]: number | string | null }

/**
 * Confirmed-cause counts for a device type in one aggregate query: per (procedure, cause) the
 * number of closed records that confirmed it and, of those, how many listed each queried symptom.
 */
export async function confirmedCounts(deviceType: string, symptoms: string[]) {
  const sums = symptoms.map((_, i) => `SUM(s.symptom = :sym${i}) AS s${i}`).join(', ')
  const join = symptoms.length ? 'LEFT JOIN record_symptoms s ON s.record_id = r.id AND s.symptom IN (:symptoms)' : ''
  const rows = await useDb().query<CountRow>(
    `SELECT r.cause_procedure_id AS pid, r.cause_key AS ck, COUNT(DISTINCT r.id) AS n${sums ? `, ${sums}` : ''}
     FROM repair_records r ${join}
     WHERE r.status = 'closed' AND r.device_type = :deviceType AND r.cause_key IS NOT NULL
     GROUP BY r.cause_procedure_id, r.cause_key`,
    { type: QueryTypes.SELECT, replacements: { deviceType, symptoms, ...Object.fromEntries(symptoms.map((s, i) => [`sym${i}`, s])) } },
  )
  const byCause = new Map<string, { confirmed: number, symptomHits: Record<string, number> }>()
  let total = 0
  for (const row of rows) {
    const n = Number(row.n)
    total += n
    byCause.set(`${row.pid}:${row.ck}`, { confirmed: n, symptomHits: Object.fromEntries(symptoms.map((s, i) => [s, Number(row[`s${i}`] ?? 0)])) })
  }
  return { byCause, total }
}

/** Causes ranked by naive Bayes over the team's confirmed records (formula in shared/utils/evidence.ts). */
export async function evidenceFor(opts: { deviceType: string, symptoms: string[], procedureId?: number }): Promise<{ data: EvidenceCauseDto[], totalRecords: number }> {
  const [candidates, counts] = await Promise.all([candidateCauses(opts), confirmedCounts(opts.deviceType, opts.symptoms)])
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
