import { Op } from 'sequelize'
import { Procedure, Revision, contentPart, jsonArray, useDb } from '../../db'

// The causes a diagnosis can confirm: those of the published, active procedures, read from the
// parts of their content that evidence needs.

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
