import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type Sequelize } from 'sequelize'
import type { SymptomStatus } from '../../../shared/types/procedure-api'

/**
 * Controlled vocabulary of symptoms. Authors may propose one (status `proposed`); an editor
 * accepts it or merges it into an existing symptom (status `merged`, `mergedIntoId` set). Merged
 * slugs stay resolvable because submitted revisions keep the slug they were written with.
 */
export class Symptom extends Model<InferAttributes<Symptom>, InferCreationAttributes<Symptom>> {
  declare id: CreationOptional<number>
  declare slug: string
  declare name: string
  declare description: CreationOptional<string>
  declare synonyms: CreationOptional<string[]>
  declare status: CreationOptional<SymptomStatus>
  declare mergedIntoId: number | null
  declare proposedById: number | null
  declare createdAt: CreationOptional<Date>
  declare updatedAt: CreationOptional<Date>

  static initModel(sequelize: Sequelize) {
    Symptom.init({
      id: { type: DataTypes.INTEGER.UNSIGNED, autoIncrement: true, primaryKey: true },
      slug: { type: DataTypes.STRING(80), allowNull: false, unique: true },
      name: { type: DataTypes.STRING(120), allowNull: false, unique: true },
      description: { type: DataTypes.TEXT, allowNull: false, defaultValue: '' },
      synonyms: {
        type: DataTypes.JSON,
        allowNull: false,
        defaultValue: [],
        get() {
          const raw = this.getDataValue('synonyms') as unknown
          return typeof raw === 'string' ? JSON.parse(raw) : (raw ?? [])
        },
      },
      status: { type: DataTypes.ENUM('accepted', 'proposed', 'merged'), allowNull: false, defaultValue: 'accepted' },
      mergedIntoId: { type: DataTypes.INTEGER.UNSIGNED, allowNull: true },
      proposedById: { type: DataTypes.INTEGER.UNSIGNED, allowNull: true },
      createdAt: DataTypes.DATE,
      updatedAt: DataTypes.DATE,
    }, { sequelize, tableName: 'symptoms' })
  }
}
