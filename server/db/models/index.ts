import type { Sequelize, Transaction } from 'sequelize'
import { Attachment } from './attachment'
import { AttachmentUse } from './attachment-use'
import { AuditEvent } from './audit-event'
import { Capture } from './capture'
import { ChangeLogEntry } from './change-log-entry'
import { DeviceType } from './device-type'
import { Invitation } from './invitation'
import { LoginFailure } from './login-failure'
import { OutboxMessage } from './outbox-message'
import { Procedure } from './procedure'
import { RecordAmendment } from './record-amendment'
import { RecordSymptom } from './record-symptom'
import { RepairRecord } from './repair-record'
import { ReviewComment } from './review-comment'
import { Revision } from './revision'
import { SignatureReference } from './signature-reference'
import { StepFlag } from './step-flag'
import { Symptom } from './symptom'
import { User } from './user'

export { Attachment, AttachmentUse, AuditEvent, Capture, SignatureReference, ChangeLogEntry, DeviceType, Invitation, LoginFailure, OutboxMessage, Procedure, RecordAmendment, RecordSymptom, RepairRecord, ReviewComment, Revision, StepFlag, Symptom, User }

/** Binds every model to the connection and declares the associations (once per process). */
export function initModels(sequelize: Sequelize) {
  for (const model of [ChangeLogEntry, User, Invitation, LoginFailure, AuditEvent, OutboxMessage, DeviceType, Symptom, Procedure, Revision, ReviewComment, Attachment, AttachmentUse, RepairRecord, RecordSymptom, RecordAmendment, StepFlag, Capture, SignatureReference]) {
    model.initModel(sequelize)
  }

  Invitation.belongsTo(User, { as: 'user', foreignKey: 'userId' })
  User.hasMany(Invitation, { as: 'invitations', foreignKey: 'userId' })

  Procedure.hasMany(Revision, { as: 'revisions', foreignKey: 'procedureId' })
  Revision.belongsTo(Procedure, { as: 'procedure', foreignKey: 'procedureId' })
  Revision.belongsTo(User, { as: 'author', foreignKey: 'authorId' })
  Revision.belongsTo(User, { as: 'reviewer', foreignKey: 'reviewerId' })
  Revision.hasMany(ReviewComment, { as: 'comments', foreignKey: 'revisionId' })
  ReviewComment.belongsTo(User, { as: 'author', foreignKey: 'authorId' })
  SignatureReference.belongsTo(Procedure, { as: 'procedure', foreignKey: 'procedureId' })

  // The files a revision's steps or a record show, kept beside them in the same transaction.
  type Saved = { fields?: string[], transaction?: Transaction | null }
  const stepImages = (rev: Revision) => (rev.content?.steps ?? []).flatMap(s => s.imageIds ?? [])
  Revision.addHook('afterCreate', (rev: Revision, o: Saved) => AttachmentUse.replaceFor('revision', rev.id, stepImages(rev), o.transaction))
  Revision.addHook('afterUpdate', async (rev: Revision, o: Saved) => {
    if (o.fields?.includes('content')) await AttachmentUse.replaceFor('revision', rev.id, stepImages(rev), o.transaction)
  })
  RepairRecord.addHook('afterCreate', (r: RepairRecord, o: Saved) => AttachmentUse.replaceFor('record', r.id, r.photoIds ?? [], o.transaction))
  RepairRecord.addHook('afterUpdate', async (r: RepairRecord, o: Saved) => {
    if (o.fields?.includes('photoIds')) await AttachmentUse.replaceFor('record', r.id, r.photoIds, o.transaction)
  })
}
