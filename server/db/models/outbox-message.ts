import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type Sequelize } from 'sequelize'

export const OUTBOX_STATES = ['pending', 'sent', 'failed'] as const
export type OutboxState = (typeof OUTBOX_STATES)[number]

/**
 * Mail waiting to be sent. Written in the same transaction as the change that causes it, sent by
 * the outbox worker with retries, so a change is never without its mail and SMTP being away
 * loses nothing.
 */
export class OutboxMessage extends Model<InferAttributes<OutboxMessage>, InferCreationAttributes<OutboxMessage>> {
  declare id: CreationOptional<number>
  declare kind: string
  declare toAddress: string
  declare subject: string
  declare textBody: string
  /** An HTML part sent beside the text, when the message has links worth a click. */
  declare htmlBody: CreationOptional<string | null>
  declare status: CreationOptional<OutboxState>
  declare attempts: CreationOptional<number>
  declare nextAttemptAt: CreationOptional<Date>
  declare lastError: string | null
  declare sentAt: Date | null
  declare lockedUntil: Date | null
  declare createdAt: CreationOptional<Date>
  declare updatedAt: CreationOptional<Date>

  static initModel(sequelize: Sequelize) {
    OutboxMessage.init({
      id: { type: DataTypes.BIGINT.UNSIGNED, autoIncrement: true, primaryKey: true },
      kind: { type: DataTypes.STRING(40), allowNull: false },
      toAddress: { type: DataTypes.STRING(254), allowNull: false },
      subject: { type: DataTypes.STRING(250), allowNull: false },
      textBody: { type: DataTypes.TEXT, allowNull: false },
      htmlBody: { type: DataTypes.TEXT, allowNull: true },
      status: { type: DataTypes.ENUM(...OUTBOX_STATES), allowNull: false, defaultValue: 'pending' },
      attempts: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false, defaultValue: 0 },
      nextAttemptAt: { type: DataTypes.DATE, allowNull: false, defaultValue: DataTypes.NOW },
      lastError: { type: DataTypes.STRING(500), allowNull: true },
      sentAt: { type: DataTypes.DATE, allowNull: true },
      lockedUntil: { type: DataTypes.DATE, allowNull: true },
      createdAt: DataTypes.DATE,
      updatedAt: DataTypes.DATE,
    }, { sequelize, tableName: 'outbox_messages' })
  }
}
