import { Op, type WhereOptions } from 'sequelize'
import type { Paginated } from '../../../shared/types/procedure-api'
import type { RecordListItemDto, RecordListQuery } from '../../../shared/types/records'
import { DeviceType, Procedure, RepairRecord, Revision, Symptom, User, useDb } from '../../db'
import { causeId } from '../evidence/causes'
import { eur } from './dto'

// The team's records: filtered, sorted and paged for the list (the CSV export, ./export.ts, reads
// them through the same filter and order).

export const RECORD_SORT: Record<RecordListQuery['sort'], [string, 'ASC' | 'DESC']> = {
  'closedAt': ['closedAt', 'ASC'], '-closedAt': ['closedAt', 'DESC'], 'startedAt': ['startedAt', 'ASC'],
  '-startedAt': ['startedAt', 'DESC'], 'minutes': ['minutes', 'ASC'], '-minutes': ['minutes', 'DESC'],
}

/** A typed term as a LIKE pattern that matches it anywhere, its wildcards taken literally. */
const containing = (term: string) => `%${term.replace(/[\\%_]/g, c => `\\${c}`)}%`

export async function recordWhere(q: Omit<RecordListQuery, 'sort' | 'page' | 'pageSize'>): Promise<WhereOptions> {
  const and: WhereOptions[] = []
  // Free text: every word must appear in the unit's model, serial or job reference.
  for (const term of (q.q ?? '').split(/\s+/).filter(Boolean).slice(0, 8)) {
    const like = { [Op.like]: containing(term) }
    and.push({ [Op.or]: [{ unitModel: like }, { unitSerial: like }, { jobRef: like }] })
  }
  if (q.deviceType) and.push({ deviceType: q.deviceType })
  if (q.outcome) and.push({ outcome: q.outcome })
  if (q.status) and.push({ status: q.status })
  if (q.technician) and.push({ technicianId: q.technician })
  if (q.from) and.push({ startedAt: { [Op.gte]: new Date(`${q.from}T00:00:00Z`) } })
  if (q.to) and.push({ startedAt: { [Op.lt]: new Date(new Date(`${q.to}T00:00:00Z`).getTime() + 86_400_000) } })
  if (q.procedure) {
    const p = await Procedure.findOne({ where: { slug: q.procedure }, attributes: ['id'] })
    and.push({ procedureId: p?.id ?? 0 })
  }
  if (q.cause) {
    const [slug, key] = q.cause.split(':')
    const p = slug ? await Procedure.findOne({ where: { slug }, attributes: ['id'] }) : null
    and.push({ causeProcedureId: p?.id ?? 0, causeKey: key ?? '' })
  }
  if (q.symptom) and.push({ id: { [Op.in]: useDb().literal(`(SELECT record_id FROM record_symptoms WHERE symptom = ${useDb().escape(q.symptom)})`) } })
  return { [Op.and]: and }
}

export async function listItems(rows: RepairRecord[]): Promise<RecordListItemDto[]> {
  const procIds = [...new Set(rows.flatMap(r => [r.procedureId, r.causeProcedureId]).filter((x): x is number => !!x))]
  const [procs, people, types, symptoms] = await Promise.all([
    Procedure.findAll({ where: { id: procIds }, attributes: ['id', 'slug', 'publishedRevisionId'], raw: true }),
    User.findAll({ where: { id: [...new Set(rows.map(r => r.technicianId))] }, attributes: ['id', 'name'], raw: true }),
    DeviceType.findAll({ attributes: ['slug', 'name'], raw: true }),
    Symptom.findAll({ attributes: ['slug', 'name'], raw: true }),
  ])
  const live = new Map(procs.map(p => [p.id, p.publishedRevisionId]))
  const revIds = [...new Set([...rows.map(r => r.revisionId), ...rows.map(r => r.causeProcedureId && live.get(r.causeProcedureId))].filter((x): x is number => !!x))]
  const revs = await Revision.findAll({ where: { id: revIds } })
  const title = new Map(revs.map(r => [r.id, r.content]))
  const procSlug = new Map(procs.map(p => [p.id, p.slug]))
  // A cause is named as the revision the record was pinned to names it, else as its procedure's live revision does.
  const causeName = (r: RepairRecord) => {
    if (!r.causeKey || !r.causeProcedureId) return null
    const pinned = r.causeProcedureId === r.procedureId && r.revisionId ? title.get(r.revisionId) : undefined
    const content = pinned ?? title.get(live.get(r.causeProcedureId) ?? 0)
    return content?.causes.find(c => c.key === r.causeKey)?.name ?? r.causeKey
  }
  const person = new Map(people.map(p => [p.id, p]))
  const typeName = new Map(types.map(t => [t.slug, t.name]))
  const symptomName = new Map(symptoms.map(s => [s.slug, s.name]))
  return rows.map((r) => {
    const content = r.revisionId ? title.get(r.revisionId) : undefined
    const causeLabel = causeName(r)
    return {
      id: r.id,
      status: r.status,
      procedure: r.procedureId && content ? { slug: procSlug.get(r.procedureId) ?? '', title: content.title } : null,
      deviceType: { slug: r.deviceType, name: typeName.get(r.deviceType) ?? r.deviceType },
      symptoms: r.symptoms.map(s => ({ slug: s, name: symptomName.get(s) ?? s })),
      unit: { model: r.unitModel, serial: r.unitSerial, jobRef: r.jobRef },
      technician: person.get(r.technicianId) ?? { id: r.technicianId, name: 'Unknown' },
      confirmedCause: r.causeKey && r.causeProcedureId ? { id: causeId(procSlug.get(r.causeProcedureId) ?? '', r.causeKey), label: causeLabel ?? r.causeKey } : null,
      outcome: r.outcome,
      minutes: r.minutes,
      partsCost: r.partsCostCents / 100,
      replacementCost: eur(r.replacementCostCents),
      comeback: r.comeback,
      startedAt: r.startedAt.toISOString(),
      closedAt: r.closedAt?.toISOString() ?? null,
    }
  })
}

export async function listRecords(q: RecordListQuery): Promise<Paginated<RecordListItemDto>> {
  const where = await recordWhere(q)
  const [col, dir] = RECORD_SORT[q.sort]
  const { rows, count } = await RepairRecord.findAndCountAll({ where, order: [[col, dir], ['id', dir]], limit: q.pageSize, offset: (q.page - 1) * q.pageSize })
  return { data: await listItems(rows), meta: { total: count, page: q.page, pageSize: q.pageSize, pages: Math.max(1, Math.ceil(count / q.pageSize)) } }
}
