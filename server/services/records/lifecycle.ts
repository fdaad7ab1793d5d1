import { createError } from 'h3'
import { Op, QueryTypes, type Transaction, type WhereOptions } from 'sequelize'
import { roleAtLeast } from '../../shared/types/roles'
import type { MeasurementSpec } from '../../shared/types/measurement'
import type { RevisionContent } from '../../shared/types/procedure'
import type { Outcome, ReadingResultDto, RecordDto, RecordListItemDto, RecordListQuery } from '../../shared/types/records'
import { evaluateReading } from '../../shared/utils/readings'
import { Attachment, DeviceType, Procedure, RecordAmendment, RecordSymptom, RepairRecord, Revision, StepFlag, Symptom, User, inTransaction, useDb } from '../db'
import type { StoredPart, StoredStep } from '../db/models/repair-record'
import { recordAudit } from './audit'
import { ChangeLogEntry } from '../db/models/change-log-entry'
import { adjustCauseCounts, candidateCauses, causeId } from './evidence'
import { queueMail } from './mail'
import { renderContent, toAttachmentDto } from './procedures'

const cents = (eur: number) => Math.round(eur * 100)
const eur = (c: number | null) => (c === null ? null : c / 100)

// ── permissions: the whole team reads every record; its technician (and editors) change one
// in progress; after closing only amendments change it (technician, editors).
export function canEditRecord(user: User, r: RepairRecord) {
  return r.status === 'in_progress' && (r.technicianId === user.id || roleAtLeast(user.role, 'editor'))
}
export function canAmendRecord(user: User, r: RepairRecord) {
  return r.status === 'closed' && (r.technicianId === user.id || roleAtLeast(user.role, 'editor'))
}

async function findRecord(id: number, transaction?: Transaction) {
  const r = await RepairRecord.findByPk(id, { transaction, lock: transaction ? transaction.LOCK.UPDATE : undefined })
  if (!r) throw createError({ statusCode: 404, message: 'No such repair record.' })
  return r
}

function evaluateStep(step: RevisionContent['steps'][number] | undefined, value: string): ReadingResultDto {
  const empty = { value, verdict: null, pass: null, display: null, error: null, raises: [] }
  if (!step?.measurement || !value.trim()) return empty
  const r = evaluateReading(value, step.measurement as MeasurementSpec, step.failPointsTo)
  if (!r.ok) return { ...empty, error: r.error }
  return { value, verdict: r.verdict, pass: r.pass, display: r.parsed.display, error: null, raises: r.raises }
}

async function evidenceChanged(transaction: Transaction) {
  await ChangeLogEntry.create({ kind: 'evidence', procedureId: null }, { transaction })
}

async function writeSymptoms(recordId: number, symptoms: string[], transaction: Transaction) {
  await RecordSymptom.destroy({ where: { recordId }, transaction })
  if (symptoms.length) await RecordSymptom.bulkCreate([...new Set(symptoms)].map(symptom => ({ recordId, symptom })), { transaction })
}

export async function toRecordDto(r: RepairRecord, user: User): Promise<RecordDto> {
  const [proc, rev, tech, type, symptomRows, amendments, photos] = await Promise.all([
    r.procedureId ? Procedure.findByPk(r.procedureId) : null,
    r.revisionId ? Revision.findByPk(r.revisionId) : null,
    User.findByPk(r.technicianId, { attributes: ['id', 'name'] }),
    DeviceType.findOne({ where: { slug: r.deviceType } }),
    Symptom.findAll({ where: { slug: r.symptoms }, attributes: ['slug', 'name'], raw: true }),
    RecordAmendment.findAll({ where: { recordId: r.id }, order: [['id', 'ASC']] }),
    r.photoIds.length ? Attachment.findAll({ where: { id: r.photoIds, kind: 'image' } }) : [],
  ])
  const content = rev?.content
  const candidates = await candidateCauses({ deviceType: r.deviceType, symptoms: r.symptoms, procedureId: r.procedureId ?? undefined })
  const label = new Map(candidates.map(c => [causeId(c.procedureSlug, c.causeKey), c.label]))
  const steps: RecordDto['steps'] = {}
  const raisedCount = new Map<string, number>()
  for (const [key, s] of Object.entries(r.steps)) {
    const result = evaluateStep(content?.steps.find(st => st.key === key), s.value)
    steps[key] = { ...s, result }
    if (proc && result.pass === false) for (const c of result.raises) raisedCount.set(causeId(proc.slug, c), (raisedCount.get(causeId(proc.slug, c)) ?? 0) + 1)
  }
  let confirmed: RecordDto['confirmedCause'] = null
  if (r.causeKey && r.causeProcedureId) {
    const cp = r.causeProcedureId === proc?.id ? proc : await Procedure.findByPk(r.causeProcedureId)
    const id = causeId(cp?.slug ?? String(r.causeProcedureId), r.causeKey)
    confirmed = { id, label: label.get(id) ?? r.causeKey }
  }
  const people = new Map((await User.findAll({ where: { id: amendments.map(a => a.authorId) }, attributes: ['id', 'name'], raw: true })).map(u => [u.id, u]))
  const symptomName = new Map(symptomRows.map(s => [s.slug, s.name]))
  return {
    id: r.id,
    status: r.status,
    procedure: proc && content ? { id: proc.id, slug: proc.slug, title: content.title } : null,
    revision: rev ? { id: rev.id, number: rev.number ?? 0 } : null,
    deviceType: { slug: r.deviceType, name: type?.name ?? r.deviceType },
    symptoms: r.symptoms.map(s => ({ slug: s, name: symptomName.get(s) ?? s })),
    unit: { model: r.unitModel, serial: r.unitSerial, jobRef: r.jobRef },
    technician: { id: r.technicianId, name: tech?.name ?? 'Unknown' },
    steps,
    notes: r.notes,
    raised: [...raisedCount].map(([cause, readings]) => ({ cause, label: label.get(cause) ?? cause, readings })).sort((a, b) => b.readings - a.readings),
    confirmedCause: confirmed,
    outcome: r.outcome,
    parts: r.parts,
    partsCost: r.partsCostCents / 100,
    minutes: r.minutes,
    replacementCost: eur(r.replacementCostCents),
    photos: photos.map(p => ({ id: p.id, url: toAttachmentDto(p).url, thumbnailUrl: toAttachmentDto(p).thumbnailUrl })),
    comeback: r.comeback,
    version: r.version,
    startedAt: r.startedAt.toISOString(),
    closedAt: r.closedAt?.toISOString() ?? null,
    amendments: amendments.map(a => ({ id: a.id, author: people.get(a.authorId) ?? { id: a.authorId, name: 'Unknown' }, reason: a.reason, changes: a.changes, createdAt: a.createdAt.toISOString() })),
    candidates: candidates.map(c => ({ id: causeId(c.procedureSlug, c.causeKey), label: c.label, procedureSlug: c.procedureSlug })),
    guide: rev && content ? { content, rendered: renderContent(content), attachments: await attachmentsOfContent(content) } : null,
    can: { edit: canEditRecord(user, r), close: canEditRecord(user, r), amend: canAmendRecord(user, r) },
  }
}

async function attachmentsOfContent(content: RevisionContent) {
  const ids = [...new Set(content.steps.flatMap(s => s.imageIds ?? []))]
  if (!ids.length) return {}
  return Object.fromEntries((await Attachment.findAll({ where: { id: ids } })).map(a => [String(a.id), toAttachmentDto(a)]))
}

export async function startRecord(input: { procedureSlug?: string, deviceType?: string, symptoms: string[], unit: { model: string, serial: string, jobRef: string } }, actor: User) {
  let procedureId: number | null = null
  let revisionId: number | null = null
  let deviceType = input.deviceType ?? ''
  let symptoms = input.symptoms
  if (input.procedureSlug) {
    const proc = await Procedure.findOne({ where: { slug: input.procedureSlug, status: 'active' } })
    const rev = proc?.publishedRevisionId ? await Revision.findByPk(proc.publishedRevisionId) : null
    if (!proc || !rev) throw createError({ statusCode: 422, message: `"${input.procedureSlug}" is not a live procedure.`, data: { fields: { procedureSlug: 'not a live procedure' } } })
    procedureId = proc.id
    revisionId = rev.id
    deviceType = rev.content.deviceType
    symptoms = symptoms.length ? symptoms : rev.content.symptoms
  }
  else if (!(await DeviceType.count({ where: { slug: deviceType } }))) {
    throw createError({ statusCode: 422, message: `Unknown device type "${deviceType}".`, data: { fields: { deviceType: 'unknown device type' } } })
  }
  const known = await Symptom.count({ where: { slug: symptoms } })
  if (known !== new Set(symptoms).size) throw createError({ statusCode: 422, message: 'One of the symptoms is not in the vocabulary.', data: { fields: { symptoms: 'unknown symptom' } } })
  return await inTransaction(async (transaction) => {
    const record = await RepairRecord.create({
      procedureId, revisionId, deviceType, symptoms,
      unitModel: input.unit.model, unitSerial: input.unit.serial, jobRef: input.unit.jobRef,
      technicianId: actor.id, causeProcedureId: null, causeKey: null, outcome: null, minutes: null,
      replacementCostCents: null, closedAt: null,
    }, { transaction })
    await writeSymptoms(record.id, symptoms, transaction)
    await recordAudit({ actorId: actor.id, action: 'record.started', entityType: 'record', entityId: record.id, after: { procedureId, revisionId } }, transaction)
    return record
  })
}

/** Saves a record in progress (as the technician goes); a stale version gets 409 with the current record. */
export async function patchRecord(id: number, patch: { version: number, unit?: Partial<{ model: string, serial: string, jobRef: string }>, symptoms?: string[], steps?: Record<string, StoredStep>, notes?: string, photoIds?: number[] }, actor: User) {
  const result = await inTransaction(async (transaction) => {
    const r = await findRecord(id, transaction)
    if (r.status !== 'in_progress') throw createError({ statusCode: 409, message: 'This record is closed; correct it with an amendment.', data: { status: r.status } })
    if (!canEditRecord(actor, r)) throw createError({ statusCode: 403, message: 'Only the record\'s technician or an editor can change it.' })
    if (r.version !== patch.version) return { stale: true as const, r }
    if (patch.photoIds) await assertPhotos(patch.photoIds)
    await r.update({
      unitModel: patch.unit?.model ?? r.unitModel,
      unitSerial: patch.unit?.serial ?? r.unitSerial,
      jobRef: patch.unit?.jobRef ?? r.jobRef,
      symptoms: patch.symptoms ?? r.symptoms,
      steps: patch.steps ? { ...r.steps, ...patch.steps } : r.steps,
      notes: patch.notes ?? r.notes,
      photoIds: patch.photoIds ?? r.photoIds,
      version: r.version + 1,
    }, { transaction })
    if (patch.symptoms) await writeSymptoms(r.id, patch.symptoms, transaction)
    return { stale: false as const, r }
  })
  if (result.stale) {
    throw createError({ statusCode: 409, message: 'This record was saved elsewhere meanwhile; both versions are kept, choose which to continue from.', data: { current: await toRecordDto(result.r, actor) } })
  }
  return result.r
}

async function assertPhotos(ids: number[]) {
  if (!ids.length) return
  const n = await Attachment.count({ where: { id: ids, kind: 'image' } })
  if (n !== new Set(ids).size) throw createError({ statusCode: 422, message: 'A photo in the list does not exist.', data: { fields: { photoIds: 'unknown photo' } } })
}

async function resolveCause(record: RepairRecord, cause: string | null): Promise<{ causeProcedureId: number | null, causeKey: string | null }> {
  if (!cause) return { causeProcedureId: null, causeKey: null }
  const candidates = await candidateCauses({ deviceType: record.deviceType, symptoms: record.symptoms, procedureId: record.procedureId ?? undefined })
  const found = candidates.find(c => causeId(c.procedureSlug, c.causeKey) === cause)
  if (!found) throw createError({ statusCode: 422, message: `"${cause}" is not a cause of this record's procedure or symptoms.`, data: { fields: { confirmedCause: 'not a candidate cause' } } })
  return { causeProcedureId: found.procedureId, causeKey: found.causeKey }
}

export async function closeRecord(id: number, body: { confirmedCause: string | null, outcome: Outcome, parts: StoredPart[], minutes: number, replacementCost: number | null, photoIds: number[], notes?: string }, actor: User) {
  const r = await findRecord(id)
  if (r.status !== 'in_progress') throw createError({ statusCode: 409, message: 'This record is already closed.', data: { status: r.status } })
  if (!canEditRecord(actor, r)) throw createError({ statusCode: 403, message: 'Only the record\'s technician or an editor can close it.' })
  const cause = await resolveCause(r, body.confirmedCause)
  await assertPhotos(body.photoIds)
  return await inTransaction(async (transaction) => {
    const locked = await findRecord(id, transaction)
    if (locked.status !== 'in_progress') throw createError({ statusCode: 409, message: 'This record is already closed.' })
    await locked.update({
      ...cause,
      status: 'closed',
      outcome: body.outcome,
      parts: body.parts,
      partsCostCents: body.parts.reduce((s, p) => s + cents(p.cost), 0),
      minutes: body.minutes,
      replacementCostCents: body.replacementCost === null ? null : cents(body.replacementCost),
      photoIds: [...new Set([...locked.photoIds, ...body.photoIds])],
      notes: body.notes ?? locked.notes,
      closedAt: new Date(),
      version: locked.version + 1,
    }, { transaction })
    await adjustCauseCounts(locked, 1, transaction)
    await evidenceChanged(transaction)
    await recordAudit({ actorId: actor.id, action: 'record.closed', entityType: 'record', entityId: id, after: { outcome: body.outcome, cause: body.confirmedCause } }, transaction)
    return locked
  })
}

const AMENDABLE = ['confirmedCause', 'outcome', 'parts', 'minutes', 'replacementCost', 'comeback', 'notes', 'photoIds'] as const

export async function amendRecord(id: number, body: { reason: string, changes: Partial<Record<(typeof AMENDABLE)[number], unknown>> }, actor: User) {
  const r = await findRecord(id)
  if (r.status !== 'closed') throw createError({ statusCode: 409, message: 'Only a closed record takes amendments; change a record in progress directly.' })
  if (!canAmendRecord(actor, r)) throw createError({ statusCode: 403, message: 'Only the record\'s technician or an editor can amend it.' })
  const c = body.changes as { confirmedCause?: string | null, outcome?: Outcome, parts?: StoredPart[], minutes?: number, replacementCost?: number | null, comeback?: boolean, notes?: string, photoIds?: number[] }
  const outcome = c.outcome ?? r.outcome
  const cause = c.confirmedCause !== undefined ? await resolveCause(r, c.confirmedCause) : { causeProcedureId: r.causeProcedureId, causeKey: r.causeKey }
  if (outcome === 'no_fault_found' && cause.causeKey) throw createError({ statusCode: 422, message: 'No cause can be confirmed when no fault was found.', data: { fields: { confirmedCause: 'must be empty for no fault found' } } })
  if (c.photoIds) await assertPhotos(c.photoIds)
  // The cause goes by the same `procedureSlug:causeKey` id before and after, as the API shows it.
  const causeProc = r.causeProcedureId ? await Procedure.findByPk(r.causeProcedureId, { attributes: ['slug'] }) : null
  const before: Record<string, unknown> = {
    confirmedCause: r.causeKey && causeProc ? causeId(causeProc.slug, r.causeKey) : null, outcome: r.outcome, parts: r.parts, minutes: r.minutes,
    replacementCost: eur(r.replacementCostCents), comeback: r.comeback, notes: r.notes, photoIds: r.photoIds,
  }
  const changes: Record<string, { before: unknown, after: unknown }> = {}
  for (const k of AMENDABLE) if (c[k] !== undefined) changes[k] = { before: before[k], after: c[k] }
  return await inTransaction(async (transaction) => {
    const locked = await findRecord(id, transaction)
    await adjustCauseCounts(locked, -1, transaction)
    await locked.update({
      ...cause,
      outcome,
      parts: c.parts ?? locked.parts,
      partsCostCents: c.parts ? c.parts.reduce((s, p) => s + cents(p.cost), 0) : locked.partsCostCents,
      minutes: c.minutes ?? locked.minutes,
      replacementCostCents: c.replacementCost !== undefined ? (c.replacementCost === null ? null : cents(c.replacementCost)) : locked.replacementCostCents,
      comeback: c.comeback ?? locked.comeback,
      notes: c.notes ?? locked.notes,
      photoIds: c.photoIds ?? locked.photoIds,
      version: locked.version + 1,
    }, { transaction })
    await adjustCauseCounts(locked, 1, transaction)
    await RecordAmendment.create({ recordId: id, authorId: actor.id, reason: body.reason, changes }, { transaction })
    await evidenceChanged(transaction)
    await recordAudit({ actorId: actor.id, action: 'record.amended', entityType: 'record', entityId: id, before, after: changes }, transaction)
    return locked
  })
}

// ── lists and export ─────────────────────────────────────────────────────────────────────────

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

export async function listRecords(q: RecordListQuery) {
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

// ── step flags ───────────────────────────────────────────────────────────────────────────────

export async function flagStep(input: { revisionId: number, stepKey: string, kind: 'unclear' | 'wrong', note: string }, actor: User, appOrigin: string) {
  const rev = await Revision.findByPk(input.revisionId)
  const proc = rev ? await Procedure.findByPk(rev.procedureId) : null
  if (!rev || !proc || (rev.state !== 'published' && !roleAtLeast(actor.role, 'author'))) throw createError({ statusCode: 404, message: 'No such revision.' })
  const step = rev.content.steps.find(s => s.key === input.stepKey)
  if (!step) throw createError({ statusCode: 422, message: `This revision has no step "${input.stepKey}".`, data: { fields: { stepKey: 'no such step' } } })
  return await inTransaction(async (transaction) => {
    const flag = await StepFlag.create({ ...input, raisedById: actor.id, resolvedById: null, resolvedAt: null }, { transaction })
    const recipients = await User.findAll({ where: { active: true, [Op.or]: [{ id: rev.authorId }, { role: ['editor', 'admin'] }], id: { [Op.ne]: actor.id } }, transaction })
    await queueMail(recipients.map(u => ({
      kind: 'step_flagged',
      to: u.email,
      subject: `Step flagged as ${input.kind}: "${step.title}" in ${rev.content.title}`,
      text: `${actor.name} flagged step "${step.title}" of "${rev.content.title}" (revision ${rev.number}) as ${input.kind}:\n\n${input.note}\n\n${appOrigin.replace(/\/$/, '')}/revisions/${rev.id}\n`,
    })), transaction)
    await recordAudit({ actorId: actor.id, action: 'step.flagged', entityType: 'revision', entityId: rev.id, after: { stepKey: input.stepKey, kind: input.kind } }, transaction)
    return flag
  })
}

export async function listFlags(revisionId: number) {
  const flags = await StepFlag.findAll({ where: { revisionId }, order: [['id', 'DESC']] })
  const people = new Map((await User.findAll({ where: { id: flags.map(f => f.raisedById) }, attributes: ['id', 'name'], raw: true })).map(u => [u.id, u]))
  return flags.map(f => ({ id: f.id, stepKey: f.stepKey, kind: f.kind, note: f.note, raisedBy: people.get(f.raisedById) ?? null, resolved: !!f.resolvedAt, createdAt: f.createdAt.toISOString() }))
}

export async function resolveFlag(id: number, actor: User) {
  const flag = await StepFlag.findByPk(id)
  if (!flag) throw createError({ statusCode: 404, message: 'No such flag.' })
  const rev = await Revision.findByPk(flag.revisionId)
  if (!(rev?.authorId === actor.id || roleAtLeast(actor.role, 'editor'))) throw createError({ statusCode: 403, message: 'The procedure\'s author or an editor resolves flags.' })
  await flag.update({ resolvedById: actor.id, resolvedAt: new Date() })
  return flag
}

export { QueryTypes }
