import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type Sequelize } from 'sequelize'

export const CHANGE_KINDS = ['procedure', 'vocabulary', 'evidence'] as const
export type ChangeKind = (typeof CHANGE_KINDS)[number]

/**
 * What changed in the published corpus, written in the transaction of the change. Every app
 * instance keeps its own search index and applies the entries it has not applied yet, so a
 * publish on one instance reaches the others within one poll. Ids are not commit order
 * (server/services/search/sync.ts says how that is handled).
 */
export class ChangeLogEntry extends Model<InferAttributes<ChangeLogEntry>, InferCreationAttributes<ChangeLogEntry>> {
  declare id: CreationOptional<number>
  declare kind: ChangeKind
  declare procedureId: number | null
  declare createdAt: CreationOptional<Date>

  static initModel(sequelize: Sequelize) {
    ChangeLogEntry.init({
      id: { type: DataTypes.BIGINT.UNSIGNED, autoIncrement: true, primaryKey: true },
      kind: { type: DataTypes.ENUM(...CHANGE_KINDS), allowNull: false },
      procedureId: { type: DataTypes.INTEGER.UNSIGNED, allowNull: true },
      createdAt: DataTypes.DATE,
    }, { sequelize, tableName: 'change_log', updatedAt: false })
  }
}
