import type { Sequelize } from 'sequelize'
import { Attachment } from './attachment'
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

export { Attachment, AuditEvent, Capture, SignatureReference, ChangeLogEntry, DeviceType, Invitation, LoginFailure, OutboxMessage, Procedure, RecordAmendment, RecordSymptom, RepairRecord, ReviewComment, Revision, StepFlag, Symptom, User }

/** Binds every model to the connection and declares the associations (once per process). */
export function initModels(sequelize: Sequelize) {
  for (const model of [ChangeLogEntry, User, Invitation, LoginFailure, AuditEvent, OutboxMessage, DeviceType, Symptom, Procedure, Revision, ReviewComment, Attachment, RepairRecord, RecordSymptom, RecordAmendment, StepFlag, Capture, SignatureReference]) {
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
}
