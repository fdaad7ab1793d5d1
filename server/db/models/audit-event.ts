import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type Sequelize } from 'sequelize'

/** Append-only record of every state change and permission-relevant action. */
export class AuditEvent extends Model<InferAttributes<AuditEvent>, InferCreationAttributes<AuditEvent>> {
  declare id: CreationOptional<number>
  declare actorId: number | null
  declare action: string
  declare entityType: string
  declare entityId: string | null
  declare before: Record<string, unknown> | null
  declare after: Record<string, unknown> | null
  declare createdAt: CreationOptional<Date>

  static initModel(sequelize: Sequelize) {
    AuditEvent.init({
      id: { type: DataTypes.BIGINT.UNSIGNED, autoIncrement: true, primaryKey: true },
      actorId: { type: DataTypes.INTEGER.UNSIGNED, allowNull: true },
      action: { type: DataTypes.STRING(64), allowNull: false },
      entityType: { type: DataTypes.STRING(32), allowNull: false },
      entityId: { type: DataTypes.STRING(64), allowNull: true },
      before: { type: DataTypes.JSON, allowNull: true },
      after: { type: DataTypes.JSON, allowNull: true },
      createdAt: DataTypes.DATE,
    }, { sequelize, tableName: 'audit_events', updatedAt: false })
  }
}
