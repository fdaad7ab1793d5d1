import { DataTypes, Model, type InferAttributes, type InferCreationAttributes, type Sequelize } from 'sequelize'

/** A record's symptoms, one row each, for indexed evidence counts. Rewritten with the record. */
export class RecordSymptom extends Model<InferAttributes<RecordSymptom>, InferCreationAttributes<RecordSymptom>> {
  declare recordId: number
  declare symptom: string

  static initModel(sequelize: Sequelize) {
    RecordSymptom.init({
      recordId: { type: DataTypes.INTEGER.UNSIGNED, primaryKey: true },
      symptom: { type: DataTypes.STRING(80), primaryKey: true },
    }, { sequelize, tableName: 'record_symptoms', timestamps: false })
  }
}
