import { Op, type WhereOptions } from 'sequelize'
import type { Paginated } from '../../../shared/types/procedure-api'
import type { RecordListItemDto, RecordListQuery } from '../../../shared/types/records'
import { DeviceType, Procedure, RepairRecord, Revision, Symptom, User, useDb } from '../../db'
import { causeId } from '../evidence/causes'
import { eur } from './dto'

// The team's records: filtered, sorted and paged for the list, streamed for the CSV export.

const SORT: Record<RecordListQuery['sort'], [string, 'ASC' | 'DESC']> = {
  'closedAt': ['closedAt', 'ASC'], '-closedAt': ['closedAt', 'DESC'], 'startedAt': ['startedAt', 'ASC'],
  '-startedAt': ['startedAt', 'DESC'], 'minutes': ['minutes', 'ASC'], '-minutes': ['minutes', 'DESC'],
}

export async function recordWhere(q: Omit<RecordListQuery, 'sort' | 'page' | 'pageSize'>): Promise<WhereOptions> {
  const and: WhereOptions[] = []
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

async function listItems(rows: RepairRecord[]): Promise<RecordListItemDto[]> {
  const procIds = [...new Set(rows.flatMap(r => [r.procedureId, r.causeProcedureId]).filter((x): x is number => !!x))]
  const [procs, people, types, symptoms] = await Promise.all([
    Procedure.findAll({ where: { id: procIds }, attributes: ['id', 'slug', 'publishedRevisionId'], raw: true }),
    User.findAll({ where: { id: [...new Set(rows.map(r => r.technicianId))] }, attributes: ['id', 'name'], raw: true }),
    DeviceType.findAll({ attributes: ['slug', 'name'], raw: true }),
    Symptom.findAll({ attributes: ['slug', 'name'], raw: true }),
  ])
  const revIds = [...new Set(rows.map(r => r.revisionId).filter((x): x is number => !!x))]
  const revs = await Revision.findAll({ where: { id: revIds } })
  const title = new Map(revs.map(r => [r.id, r.content]))
  const procSlug = new Map(procs.map(p => [p.id, p.slug]))
  const person = new Map(people.map(p => [p.id, p]))
  const typeName = new Map(types.map(t => [t.slug, t.name]))
  const symptomName = new Map(symptoms.map(s => [s.slug, s.name]))
  return rows.map((r) => {
    const content = r.revisionId ? title.get(r.revisionId) : undefined
    const causeLabel = r.causeKey ? (content?.causes.find(c => c.key === r.causeKey)?.name ?? r.causeKey) : null
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
  const [col, dir] = SORT[q.sort]
  const { rows, count } = await RepairRecord.findAndCountAll({ where, order: [[col, dir], ['id', dir]], limit: q.pageSize, offset: (q.page - 1) * q.pageSize })
  return { data: await listItems(rows), meta: { total: count, page: q.page, pageSize: q.pageSize, pages: Math.max(1, Math.ceil(count / q.pageSize)) } }
}

export const CSV_COLUMNS = ['id', 'status', 'procedure', 'device_type', 'symptoms', 'model', 'serial', 'job_ref', 'technician', 'confirmed_cause', 'outcome', 'minutes', 'parts_cost_eur', 'replacement_cost_eur', 'comeback', 'started_at', 'closed_at'] as const

/** Yields CSV rows for the filter in id order, a page at a time, so an export never sits in memory whole. */
export async function* recordCsvRows(q: Omit<RecordListQuery, 'sort' | 'page' | 'pageSize'>): AsyncGenerator<Array<string | number>> {
  const where = await recordWhere(q)
  let after = 0
  for (;;) {
    const rows = await RepairRecord.findAll({ where: { [Op.and]: [where, { id: { [Op.gt]: after } }] }, order: [['id', 'ASC']], limit: 500 })
    if (!rows.length) return
    for (const item of await listItems(rows)) {
      yield [item.id, item.status, item.procedure?.slug ?? '', item.deviceType.slug, item.symptoms.map(s => s.slug).join('|'), item.unit.model, item.unit.serial, item.unit.jobRef,
        item.technician.name, item.confirmedCause?.id ?? '', item.outcome ?? '', item.minutes ?? '', item.partsCost.toFixed(2), item.replacementCost?.toFixed(2) ?? '', item.comeback ? 'yes' : 'no', item.startedAt, item.closedAt ?? '']
    }
    after = rows[rows.length - 1]!.id
  }
}
