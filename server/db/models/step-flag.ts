import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type Sequelize } from 'sequelize'

/** A technician's flag on a step of a published revision: unclear or wrong, open until resolved. */
export class StepFlag extends Model<InferAttributes<StepFlag>, InferCreationAttributes<StepFlag>> {
  declare id: CreationOptional<number>
  declare revisionId: number
  declare stepKey: string
  declare kind: 'unclear' | 'wrong'
  declare note: string
  declare raisedById: number
  declare resolvedById: number | null
  declare resolvedAt: Date | null
  declare createdAt: CreationOptional<Date>
  declare updatedAt: CreationOptional<Date>

  static initModel(sequelize: Sequelize) {
    StepFlag.init({
      id: { type: DataTypes.INTEGER.UNSIGNED, autoIncrement: true, primaryKey: true },
      revisionId: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
      stepKey: { type: DataTypes.STRING(40), allowNull: false },
      kind: { type: DataTypes.ENUM('unclear', 'wrong'), allowNull: false },
      note: { type: DataTypes.STRING(2000), allowNull: false },
      raisedById: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
      resolvedById: { type: DataTypes.INTEGER.UNSIGNED, allowNull: true },
      resolvedAt: { type: DataTypes.DATE, allowNull: true },
      createdAt: DataTypes.DATE,
      updatedAt: DataTypes.DATE,
    }, { sequelize, tableName: 'step_flags' })
  }
}
