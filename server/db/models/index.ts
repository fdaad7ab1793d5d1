import type { Sequelize } from 'sequelize'
import { AuditEvent } from './audit-event'
import { Invitation } from './invitation'
import { LoginFailure } from './login-failure'
import { OutboxMessage } from './outbox-message'
import { User } from './user'

export { AuditEvent, Invitation, LoginFailure, OutboxMessage, User }

/** Binds every model to the connection and declares the associations (once per process). */
export function initModels(sequelize: Sequelize) {
  User.initModel(sequelize)
  Invitation.initModel(sequelize)
  LoginFailure.initModel(sequelize)
  AuditEvent.initModel(sequelize)
  OutboxMessage.initModel(sequelize)

  Invitation.belongsTo(User, { as: 'user', foreignKey: 'userId' })
  User.hasMany(Invitation, { as: 'invitations', foreignKey: 'userId' })
}
