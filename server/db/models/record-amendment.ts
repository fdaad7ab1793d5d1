import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type Sequelize } from 'sequelize'

/** A correction to a closed record: the fields it changed, before and after. Never edited. */
export class RecordAmendment extends Model<InferAttributes<RecordAmendment>, InferCreationAttributes<RecordAmendment>> {
  declare id: CreationOptional<number>
  declare recordId: number
  declare authorId: number
  declare reason: string
  declare changes: Record<string, { before: unknown, after: unknown }>
  declare createdAt: CreationOptional<Date>

  static initModel(sequelize: Sequelize) {
    RecordAmendment.init({
      id: { type: DataTypes.INTEGER.UNSIGNED, autoIncrement: true, primaryKey: true },
      recordId: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
      authorId: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
      reason: { type: DataTypes.STRING(1000), allowNull: false },
      changes: {
        type: DataTypes.JSON,
        allowNull: false,
        get() {
          const raw = this.getDataValue('changes') as unknown
          return typeof raw === 'string' ? JSON.parse(raw) : raw
        },
      },
      createdAt: DataTypes.DATE,
    }, { sequelize, tableName: 'record_amendments', updatedAt: false })
  }
}
