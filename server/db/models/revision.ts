import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type Sequelize } from 'sequelize'
import { REVISION_STATES, type RevisionContent, type RevisionState } from '../../../shared/types/procedure'

/**
 * One revision of a procedure. A draft's content changes with each save (`version` counts
 * them); from submission on, the content never changes again and the revision has its number.
 */
export class Revision extends Model<InferAttributes<Revision>, InferCreationAttributes<Revision>> {
  declare id: CreationOptional<number>
  declare procedureId: number
  declare number: number | null
  declare state: CreationOptional<RevisionState>
  declare authorId: number
  declare content: RevisionContent
  declare changeNote: CreationOptional<string>
  declare baseRevisionId: number | null
  declare reviewerId: number | null
  declare version: CreationOptional<number>
  declare submittedAt: Date | null
  declare decidedAt: Date | null
  declare publishedAt: Date | null
  declare createdAt: CreationOptional<Date>
  declare updatedAt: CreationOptional<Date>

  static initModel(sequelize: Sequelize) {
    Revision.init({
      id: { type: DataTypes.INTEGER.UNSIGNED, autoIncrement: true, primaryKey: true },
      procedureId: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
      number: { type: DataTypes.INTEGER.UNSIGNED, allowNull: true },
      state: { type: DataTypes.ENUM(...REVISION_STATES), allowNull: false, defaultValue: 'draft' },
      authorId: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
      content: {
        type: DataTypes.JSON,
        allowNull: false,
        get() {
          const raw = this.getDataValue('content') as unknown
          return (typeof raw === 'string' ? JSON.parse(raw) : raw) as RevisionContent
        },
      },
      changeNote: { type: DataTypes.STRING(500), allowNull: false, defaultValue: '' },
      baseRevisionId: { type: DataTypes.INTEGER.UNSIGNED, allowNull: true },
      reviewerId: { type: DataTypes.INTEGER.UNSIGNED, allowNull: true },
      version: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false, defaultValue: 1 },
      submittedAt: { type: DataTypes.DATE, allowNull: true },
      decidedAt: { type: DataTypes.DATE, allowNull: true },
      publishedAt: { type: DataTypes.DATE, allowNull: true },
      createdAt: DataTypes.DATE,
      updatedAt: DataTypes.DATE,
    }, { sequelize, tableName: 'revisions' })
  }
}
