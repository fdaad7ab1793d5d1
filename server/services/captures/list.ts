import { Op, type WhereOptions } from 'sequelize'
import type { CaptureListItemDto, CaptureListQuery } from '../../../shared/types/captures'
import type { Paginated } from '../../../shared/types/procedure-api'
import type { WaveformFeatures } from '../../../shared/utils/waveform/analyse'
import { Capture, contentPart, jsonArray, Procedure, RepairRecord, Revision, User, useDb } from '../../db'

const dayAfter = (date: string) => new Date(Date.parse(`${date}T00:00:00Z`) + 86_400_000)

/** Conditions of the list's filters; a procedure means its records' captures and its reference signatures. */
async function captureWhere(q: CaptureListQuery, actor: User): Promise<WhereOptions | null> {
  const and: WhereOptions[] = []
  if (q.mine) and.push({ uploadedById: actor.id })
  if (q.record !== undefined) and.push({ recordId: q.record })
  if (q.cut !== undefined) and.push({ cutType: q.cut })
  if (q.from !== undefined) and.push({ createdAt: { [Op.gte]: new Date(`${q.from}T00:00:00Z`) } })
  if (q.to !== undefined) and.push({ createdAt: { [Op.lt]: dayAfter(q.to) } })
  if (q.procedure !== undefined) {
    const procedure = await Procedure.findOne({ where: { slug: q.procedure }, attributes: ['id'] })
    if (!procedure) return null
    const db = useDb()
    and.push({
      [Op.or]: [
        { recordId: { [Op.in]: db.literal(`(SELECT id FROM repair_records WHERE procedure_id = ${Number(procedure.id)})`) } },
        { id: { [Op.in]: db.literal(`(SELECT capture_id FROM signature_references WHERE procedure_id = ${Number(procedure.id)})`) } },
      ],
    })
  }
  return { [Op.and]: and }
}

interface RecordGlance { record: NonNullable<CaptureListItemDto['record']>, steps: Map<string, string> }

/** The procedure title, unit and step titles of each record, from its pinned revision. */
async function recordsOf(ids: number[]): Promise<Map<number, RecordGlance>> {
  if (!ids.length) return new Map()
  const records = await RepairRecord.findAll({ where: { id: ids }, attributes: ['id', 'revisionId', 'unitModel'], raw: true })
  const revisionIds = records.map(r => r.revisionId).filter((x): x is number => x !== null)
  type Row = { id: number, title: string | null, keys: unknown, titles: unknown }
  const revisions = new Map(revisionIds.length
    ? (await Revision.findAll({
        where: { id: revisionIds },
        attributes: ['id', [contentPart('JSON_VALUE', '$.title'), 'title'], [contentPart('JSON_EXTRACT', '$.steps[*].key'), 'keys'], [contentPart('JSON_EXTRACT', '$.steps[*].title'), 'titles']],
        raw: true,
      }) as unknown as Row[]).map((r) => {
        const keys = jsonArray<string>(r.keys)
        const titles = jsonArray<string>(r.titles)
        return [r.id, { title: r.title, steps: new Map(keys.map((k, i) => [k, titles[i] ?? k])) }]
      })
    : [])
  return new Map(records.map((r) => {
    const revision = r.revisionId !== null ? revisions.get(r.revisionId) : undefined
    return [r.id, { record: { id: r.id, procedureTitle: revision?.title ?? null, unitModel: r.unitModel }, steps: revision?.steps ?? new Map() }]
  }))
}

/** Captures newest first, with what each shows at a glance; the whole team sees them all. */
export async function listCaptures(q: CaptureListQuery, actor: User): Promise<Paginated<CaptureListItemDto>> {
  const meta = (total: number) => ({ total, page: q.page, pageSize: q.pageSize, pages: Math.max(1, Math.ceil(total / q.pageSize)) })
  const where = await captureWhere(q, actor)
  if (where === null) return { data: [], meta: meta(0) }
  const db = useDb()
  const { rows, count } = await Capture.findAndCountAll({
    where,
    attributes: ['id', 'label', 'createdAt', 'uploadedById', 'recordId', 'stepKey', 'features', [db.fn('JSON_VALUE', db.col('analysis'), db.literal('\'$.eventsTotal\'')), 'eventsTotal']],
    order: [['createdAt', 'DESC'], ['id', 'DESC']],
    limit: q.pageSize,
    offset: (q.page - 1) * q.pageSize,
  })
  const [people, records] = await Promise.all([
    User.findAll({ where: { id: [...new Set(rows.map(c => c.uploadedById))] }, attributes: ['id', 'name'], raw: true }).then(us => new Map(us.map(u => [u.id, u]))),
    recordsOf([...new Set(rows.map(c => c.recordId).filter((x): x is number => x !== null))]),
  ])
  const glance = (f: WaveformFeatures): CaptureListItemDto['features'] => ({
    cutType: f.cutType, dead: f.dead, vrms: f.vrms, frequencyHz: f.frequencyHz, conductionAngleDeg: f.conductionAngleDeg, asymmetry: f.asymmetry, thd: f.thd, supplyVrms: f.supplyVrms,
  })
  return {
    data: rows.map((c) => {
      const record = c.recordId !== null ? records.get(c.recordId) : undefined
      return {
        id: c.id,
        label: c.label,
        createdAt: c.createdAt.toISOString(),
        uploadedBy: people.get(c.uploadedById) ?? { id: c.uploadedById, name: 'Unknown' },
        record: record?.record ?? null,
        stepKey: c.stepKey,
        stepTitle: c.stepKey !== null ? record?.steps.get(c.stepKey) ?? null : null,
        features: glance(c.features),
        events: Number(c.get('eventsTotal') ?? 0) || 0,
      }
    }),
    meta: meta(count),
  }
}
