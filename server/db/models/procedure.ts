import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type Sequelize } from 'sequelize'
import { PROCEDURE_STATUSES, type ProcedureStatus } from '../../../shared/types/procedure'

export class Procedure extends Model<InferAttributes<Procedure>, InferCreationAttributes<Procedure>> {
  declare id: CreationOptional<number>
  declare slug: string
  declare status: CreationOptional<ProcedureStatus>
  declare publishedRevisionId: number | null
  /** Highest revision number handed out; read and bumped under a row lock at each submission. */
  declare lastNumber: CreationOptional<number>
  declare createdById: number
  declare retiredAt: Date | null
  declare createdAt: CreationOptional<Date>
  declare updatedAt: CreationOptional<Date>

  static initModel(sequelize: Sequelize) {
    Procedure.init({
      id: { type: DataTypes.INTEGER.UNSIGNED, autoIncrement: true, primaryKey: true },
      slug: { type: DataTypes.STRING(100), allowNull: false, unique: true },
      status: { type: DataTypes.ENUM(...PROCEDURE_STATUSES), allowNull: false, defaultValue: 'active' },
      publishedRevisionId: { type: DataTypes.INTEGER.UNSIGNED, allowNull: true },
      lastNumber: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false, defaultValue: 0 },
      createdById: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
      retiredAt: { type: DataTypes.DATE, allowNull: true },
      createdAt: DataTypes.DATE,
      updatedAt: DataTypes.DATE,
    }, { sequelize, tableName: 'procedures' })
  }
}
