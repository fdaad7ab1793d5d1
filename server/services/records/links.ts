import type { Transaction } from 'sequelize'
import { Attachment, RepairRecord, type User } from '../../db'
import { conflict, forbidden, invalid } from '../errors'
import { canAmendRecord, canEditRecord } from './access'

// Who may link which object to which record: one rule for bench photos (saving, closing and
// amending a record) and captures (uploaded for a record). An id alone is never enough (OWASP
// WSTG-ATHZ-04): the person linking must be allowed to change the record (its technician or an
// editor; while in progress, or by amendment once closed), and the object must be theirs (they
// uploaded it) or already on this record. Another technician's photo, or a draft's step image,
// answers as an unknown photo, so the check tells nothing about files one cannot see.

/** Whether this person may attach things to this record in its present state. */
export function mayLinkTo(user: User, record: RepairRecord): boolean {
  return canEditRecord(user, record) || canAmendRecord(user, record)
}

/** Refuses every photo id that is not this person's own image or already on the record, naming each. */
export async function assertPhotosLinkable(record: RepairRecord, photoIds: number[], actor: User, transaction?: Transaction): Promise<void> {
  const onRecord = new Set(record.photoIds)
  const added = [...new Set(photoIds.filter(id => !onRecord.has(id)))]
  if (!added.length) return
  const own = new Set((await Attachment.findAll({ where: { id: added, kind: 'image', uploadedById: actor.id }, attributes: ['id'], raw: true, transaction })).map(a => a.id))
  const fields: Record<string, string> = {}
  photoIds.forEach((id, i) => {
    if (!onRecord.has(id) && !own.has(id)) fields[`photoIds.${i}`] = 'not a photo you uploaded'
  })
  if (Object.keys(fields).length) throw invalid('Only photos you uploaded (or already on this record) can be attached to it.', fields)
}

/**
 * The record an upload (a capture) is to be attached to: it exists, and this person may attach to
 * it now (its technician or an editor, while it is in progress).
 */
export async function recordToAttachTo(recordId: number, actor: User, transaction?: Transaction): Promise<RepairRecord> {
  const record = await RepairRecord.findByPk(recordId, { transaction })
  if (!record) throw invalid('No such repair record.', { recordId: 'unknown record' })
  if (record.status !== 'in_progress') throw conflict('The record is closed: nothing more can be attached to it.', { fields: { recordId: 'record is closed' } })
  if (!canEditRecord(actor, record)) throw forbidden('Only the record\'s technician or an editor can attach to it.')
  return record
}
