import { isDeepStrictEqual } from 'node:util'
import type { Transaction } from 'sequelize'
import type { CloseDraft, Outcome } from '../../../shared/types/records'
import type { User } from '../../db'
import { DeviceType, Procedure, RecordAmendment, RecordSymptom, RepairRecord, Revision, Symptom, inTransaction } from '../../db'
import type { StoredPart } from '../../db/models/repair-record'
import { recordAudit } from '../audit/audit-log'
import { notifyEvidenceChanged } from '../change-log/notify'
import { conflict, forbidden, invalid } from '../errors'
import { adjustCauseCounts } from '../evidence/counts'
import { candidateCauses, causeId } from '../evidence/causes'
import { adjustLearnedCounts, contributionOf } from '../diagnosis/learned'
import { guideOf } from '../diagnosis/record'
import type { Guide } from '../diagnosis/reasoning'
import { canAmendRecord, canEditRecord, findRecord } from './access'
import { eur, toRecordDto } from './dto'
import { assertPhotosLinkable } from './links'
import { flowPath, judgeSteps, type SentStep } from './steps'

// A repair record from start to close: started from a live procedure (its revision pinned) or
// from device type and symptoms, saved as the technician goes (stale version → 409 with the
// current record), closed with the confirmed cause, and after that changed only by amendments.
// Closing and amending move the evidence counts and the counts reasoning learns from in the same
// transaction.

const cents = (euros: number) => Math.round(euros * 100)

/**
 * A new record (`replace` false) has no rows to remove: a DELETE there would still take a gap
 * lock on the empty range, which blocks other records' inserts and, on a cluster, makes
 * replicated writes abort local ones.
 */
async function writeSymptoms(recordId: number, symptoms: string[], transaction: Transaction, replace = true) {
  if (replace) await RecordSymptom.destroy({ where: { recordId }, transaction })
  if (symptoms.length) await RecordSymptom.bulkCreate([...new Set(symptoms)].map(symptom => ({ recordId, symptom })), { transaction })
}

export async function startRecord(input: { procedureSlug?: string, deviceType?: string, symptoms: string[], unit: { model: string, serial: string, jobRef: string } }, actor: User) {
  let procedureId: number | null = null
  let revisionId: number | null = null
  let deviceType = input.deviceType ?? ''
  let symptoms = input.symptoms
  if (input.procedureSlug) {
    const proc = await Procedure.findOne({ where: { slug: input.procedureSlug, status: 'active' } })
    const rev = proc?.publishedRevisionId ? await Revision.findByPk(proc.publishedRevisionId) : null
    if (!proc || !rev) throw invalid(`"${input.procedureSlug}" is not a live procedure.`, { procedureSlug: 'not a live procedure' })
    procedureId = proc.id
    revisionId = rev.id
    deviceType = rev.content.deviceType
    symptoms = symptoms.length ? symptoms : rev.content.symptoms
  }
  else if (!(await DeviceType.count({ where: { slug: deviceType } }))) {
    throw invalid(`Unknown device type "${deviceType}".`, { deviceType: 'unknown device type' })
  }
  const known = await Symptom.count({ where: { slug: symptoms } })
  if (known !== new Set(symptoms).size) throw invalid('One of the symptoms is not in the vocabulary.', { symptoms: 'unknown symptom' })
  return await inTransaction(async (transaction) => {
    const record = await RepairRecord.create({
      procedureId, revisionId, deviceType, symptoms,
      unitModel: input.unit.model, unitSerial: input.unit.serial, jobRef: input.unit.jobRef,
      technicianId: actor.id, causeProcedureId: null, causeKey: null, outcome: null, minutes: null,
      replacementCostCents: null, closedAt: null,
    }, { transaction })
    await writeSymptoms(record.id, symptoms, transaction, false)
    await recordAudit({ actorId: actor.id, action: 'record.started', entityType: 'record', entityId: record.id, after: { procedureId, revisionId } }, transaction)
    return record
  })
}

interface RecordPatch {
  version: number
  unit?: Partial<{ model: string, serial: string, jobRef: string }>
  symptoms?: string[]
  /** Only the fields named change; a step's other fields stay as saved. */
  steps?: Record<string, Partial<SentStep>>
  notes?: string
  photoIds?: number[]
  closeDraft?: CloseDraft | null
}

/**
 * Saves a record in progress (as the technician goes); a stale version gets 409 with the current
 * record. Each reading sent is judged on the server (verdict, done once readable, timed); a step
 * marked done whose reading cannot be read is refused with 422 naming `steps.<key>.done`.
 */
export async function patchRecord(id: number, patch: RecordPatch, actor: User) {
  const current = await findRecord(id)
  const guide = patch.steps ? await guideOf(current) : null
  const result = await inTransaction(async (transaction) => {
    const r = await findRecord(id, transaction)
    if (r.status !== 'in_progress') throw conflict('This record is closed; correct it with an amendment.', { status: r.status })
    if (!canEditRecord(actor, r)) throw forbidden('Only the record\'s technician or an editor can change it.')
    // A save sent again after its answer was lost (a phone whose connection dropped mid-save)
    // finds its own values already stored: nothing would change, so it is no conflict.
    if (r.version !== patch.version) return { stale: !changesNothing(r, patch), r }
    if (patch.photoIds) await assertPhotosLinkable(r, patch.photoIds, actor, transaction)
    let steps = r.steps
    if (patch.steps) {
      const judged = judgeSteps(guide?.content.steps ?? [], r.steps, patch.steps, new Date())
      if (Object.keys(judged.fields).length) throw invalid(`A step cannot be marked done: ${Object.values(judged.fields).join('; ')}`, judged.fields)
      steps = judged.steps
    }
    await r.update({
      unitModel: patch.unit?.model ?? r.unitModel,
      unitSerial: patch.unit?.serial ?? r.unitSerial,
      jobRef: patch.unit?.jobRef ?? r.jobRef,
      symptoms: patch.symptoms ?? r.symptoms,
      steps,
      path: guide ? flowPath(guide.content.steps, steps) : r.path,
      notes: patch.notes ?? r.notes,
      photoIds: patch.photoIds ?? r.photoIds,
      closeDraft: patch.closeDraft !== undefined ? patch.closeDraft : r.closeDraft,
      version: r.version + 1,
    }, { transaction })
    if (patch.symptoms) await writeSymptoms(r.id, patch.symptoms, transaction)
    return { stale: false as const, r }
  })
  if (result.stale) {
    throw conflict('This record was saved elsewhere meanwhile; both versions are kept, choose which to continue from.', { current: await toRecordDto(result.r, actor) })
  }
  return result.r
}

async function resolveCause(record: RepairRecord, cause: string | null): Promise<{ causeProcedureId: number | null, causeKey: string | null }> {
  if (!cause) return { causeProcedureId: null, causeKey: null }
  const candidates = await candidateCauses({ deviceType: record.deviceType, symptoms: record.symptoms, procedureId: record.procedureId ?? undefined })
  const found = candidates.find(c => causeId(c.procedureSlug, c.causeKey) === cause)
  if (!found) throw invalid(`"${cause}" is not a cause of this record's procedure or symptoms.`, { confirmedCause: 'not a candidate cause' })
  return { causeProcedureId: found.procedureId, causeKey: found.causeKey }
}

/** Moves the counts reasoning learns from by one closed record of a guided procedure. */
async function adjustLearning(r: RepairRecord, guide: Guide | null, delta: 1 | -1, transaction: Transaction) {
  const contribution = guide && contributionOf(r, guide.content)
  if (contribution) await adjustLearnedCounts(guide.procedureId, contribution, delta, transaction)
}

export async function closeRecord(id: number, body: { confirmedCause: string | null, outcome: Outcome, parts: StoredPart[], minutes: number, replacementCost: number | null, photoIds: number[], notes?: string }, actor: User) {
  const r = await findRecord(id)
  if (r.status !== 'in_progress') throw conflict('This record is already closed.', { status: r.status })
  if (!canEditRecord(actor, r)) throw forbidden('Only the record\'s technician or an editor can close it.')
  const cause = await resolveCause(r, body.confirmedCause)
  const guide = await guideOf(r)
  return await inTransaction(async (transaction) => {
    const locked = await findRecord(id, transaction)
    if (locked.status !== 'in_progress') throw conflict('This record is already closed.')
    await assertPhotosLinkable(locked, body.photoIds, actor, transaction)
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
      closeDraft: null,
      version: locked.version + 1,
    }, { transaction })
    await adjustCauseCounts(locked, 1, transaction)
    await adjustLearning(locked, guide, 1, transaction)
    await notifyEvidenceChanged(transaction)
    await recordAudit({ actorId: actor.id, action: 'record.closed', entityType: 'record', entityId: id, after: { outcome: body.outcome, cause: body.confirmedCause } }, transaction)
    return locked
  })
}

const AMENDABLE = ['confirmedCause', 'outcome', 'parts', 'minutes', 'replacementCost', 'comeback', 'notes', 'photoIds'] as const

export async function amendRecord(id: number, body: { reason: string, changes: Partial<Record<(typeof AMENDABLE)[number], unknown>> }, actor: User) {
  const r = await findRecord(id)
  if (r.status !== 'closed') throw conflict('Only a closed record takes amendments; change a record in progress directly.')
  if (!canAmendRecord(actor, r)) throw forbidden('Only the record\'s technician or an editor can amend it.')
  const c = body.changes as { confirmedCause?: string | null, outcome?: Outcome, parts?: StoredPart[], minutes?: number, replacementCost?: number | null, comeback?: boolean, notes?: string, photoIds?: number[] }
  const outcome = c.outcome ?? r.outcome
  const cause = c.confirmedCause !== undefined ? await resolveCause(r, c.confirmedCause) : { causeProcedureId: r.causeProcedureId, causeKey: r.causeKey }
  if (outcome === 'no_fault_found' && cause.causeKey) throw invalid('No cause can be confirmed when no fault was found.', { confirmedCause: 'must be empty for no fault found' })
  if (c.photoIds) await assertPhotosLinkable(r, c.photoIds, actor)
  // The cause goes by the same `procedureSlug:causeKey` id before and after, as the API shows it.
  const causeProc = r.causeProcedureId ? await Procedure.findByPk(r.causeProcedureId, { attributes: ['slug'] }) : null
  const before: Record<string, unknown> = {
    confirmedCause: r.causeKey && causeProc ? causeId(causeProc.slug, r.causeKey) : null, outcome: r.outcome, parts: r.parts, minutes: r.minutes,
    replacementCost: eur(r.replacementCostCents), comeback: r.comeback, notes: r.notes, photoIds: r.photoIds,
  }
  const changes: Record<string, { before: unknown, after: unknown }> = {}
  for (const k of AMENDABLE) if (c[k] !== undefined) changes[k] = { before: before[k], after: c[k] }
  const guide = await guideOf(r)
  return await inTransaction(async (transaction) => {
    const locked = await findRecord(id, transaction)
    await adjustCauseCounts(locked, -1, transaction)
    await adjustLearning(locked, guide, -1, transaction)
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
    await adjustLearning(locked, guide, 1, transaction)
    await RecordAmendment.create({ recordId: id, authorId: actor.id, reason: body.reason, changes }, { transaction })
    await notifyEvidenceChanged(transaction)
    await recordAudit({ actorId: actor.id, action: 'record.amended', entityType: 'record', entityId: id, before, after: changes }, transaction)
    return locked
  })
}

/** Whether every field a save names already holds the value it names. */
function changesNothing(r: RepairRecord, patch: Parameters<typeof patchRecord>[1]): boolean {
  const unit = patch.unit ?? {}
  const same = (stored: unknown, sent: unknown) => sent === undefined || isDeepStrictEqual(stored, sent)
  const stepsSame = Object.entries(patch.steps ?? {}).every(([key, fields]) => {
    const stored = r.steps[key] as Record<string, unknown> | undefined
    return Object.entries(fields).every(([field, value]) => same(stored?.[field], value))
  })
  return stepsSame && same(r.unitModel, unit.model) && same(r.unitSerial, unit.serial) && same(r.jobRef, unit.jobRef)
    && same(r.notes, patch.notes) && same(r.symptoms, patch.symptoms) && same(r.photoIds, patch.photoIds)
}
