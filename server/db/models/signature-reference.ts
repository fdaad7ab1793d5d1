import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type Sequelize } from 'sequelize'
import type { ReferenceKind } from '../../../shared/types/captures'

/** A capture an author marked as a procedure's known-good trace or the trace of a given fault (step or symptom). */
export class SignatureReference extends Model<InferAttributes<SignatureReference>, InferCreationAttributes<SignatureReference>> {
  declare id: CreationOptional<number>
  declare captureId: number
  declare procedureId: number
  declare stepKey: string | null
  declare symptom: string | null
  declare kind: ReferenceKind
  declare note: CreationOptional<string>
  declare createdById: number
  declare createdAt: CreationOptional<Date>

  static initModel(sequelize: Sequelize) {
    SignatureReference.init({
      id: { type: DataTypes.INTEGER.UNSIGNED, autoIncrement: true, primaryKey: true },
      captureId: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
      procedureId: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
      stepKey: { type: DataTypes.STRING(40), allowNull: true },
      symptom: { type: DataTypes.STRING(80), allowNull: true },
      kind: { type: DataTypes.ENUM('good', 'fault'), allowNull: false },
      note: { type: DataTypes.STRING(500), allowNull: false, defaultValue: '' },
      createdById: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
      createdAt: DataTypes.DATE,
    }, { sequelize, tableName: 'signature_references', updatedAt: false })
  }
}
