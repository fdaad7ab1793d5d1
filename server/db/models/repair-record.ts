import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type Sequelize } from 'sequelize'
import { OUTCOMES, RECORD_STATUSES, type CloseDraft, type Outcome, type RecordStatus } from '../../../shared/types/records'
import type { StepVerdict } from '../../../shared/types/verdicts'

/** A step as a record keeps it: what was typed, and the verdict and time the server gave it. */
export interface StoredStep { value: string, note: string, done: boolean, verdict?: StepVerdict | null, readAt?: string | null }
export interface StoredPart { name: string, partNumber?: string, cost: number }

const json = <T>(field: string, fallback: T) => ({
  type: DataTypes.JSON,
  allowNull: false,
  get(this: Model) {
    const raw = this.getDataValue(field) as unknown
    return (typeof raw === 'string' ? JSON.parse(raw) : raw ?? fallback) as T
  },
})

/**
 * One job at the bench. While in progress its technician saves as they go; once closed it is
 * changed only by amendments (each kept in record_amendments with who, when and why).
 * Money is kept in cents.
 */
export class RepairRecord extends Model<InferAttributes<RepairRecord>, InferCreationAttributes<RepairRecord>> {
  declare id: CreationOptional<number>
  declare status: CreationOptional<RecordStatus>
  declare procedureId: number | null
  declare revisionId: number | null
  declare deviceType: string
  declare symptoms: string[]
  declare unitModel: CreationOptional<string>
  declare unitSerial: CreationOptional<string>
  declare jobRef: CreationOptional<string>
  declare technicianId: number
  declare steps: CreationOptional<Record<string, StoredStep>>
  declare notes: CreationOptional<string>
  /** The step keys a flow took, in order (empty for a procedure that is not a flow). */
  declare path: CreationOptional<string[]>
  /** The close form as it is being filled in; null once closed. */
  declare closeDraft: CreationOptional<CloseDraft | null>
  /** Procedure id of the confirmed cause (a symptom-only record can confirm any procedure's cause). */
  declare causeProcedureId: number | null
  declare causeKey: string | null
  declare outcome: Outcome | null
  declare parts: CreationOptional<StoredPart[]>
  declare partsCostCents: CreationOptional<number>
  declare minutes: number | null
  declare replacementCostCents: number | null
  declare photoIds: CreationOptional<number[]>
  declare comeback: CreationOptional<boolean>
  declare version: CreationOptional<number>
  declare startedAt: CreationOptional<Date>
  declare closedAt: Date | null
  declare createdAt: CreationOptional<Date>
  declare updatedAt: CreationOptional<Date>

  static initModel(sequelize: Sequelize) {
    RepairRecord.init({
      id: { type: DataTypes.INTEGER.UNSIGNED, autoIncrement: true, primaryKey: true },
      status: { type: DataTypes.ENUM(...RECORD_STATUSES), allowNull: false, defaultValue: 'in_progress' },
      procedureId: { type: DataTypes.INTEGER.UNSIGNED, allowNull: true },
      revisionId: { type: DataTypes.INTEGER.UNSIGNED, allowNull: true },
      deviceType: { type: DataTypes.STRING(80), allowNull: false },
      symptoms: json<string[]>('symptoms', []),
      unitModel: { type: DataTypes.STRING(120), allowNull: false, defaultValue: '' },
      unitSerial: { type: DataTypes.STRING(120), allowNull: false, defaultValue: '' },
      jobRef: { type: DataTypes.STRING(80), allowNull: false, defaultValue: '' },
      technicianId: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
      steps: { ...json<Record<string, StoredStep>>('steps', {}), defaultValue: {} },
      notes: { type: DataTypes.TEXT, allowNull: false, defaultValue: '' },
      path: { ...json<string[]>('path', []), allowNull: true, defaultValue: [] },
      closeDraft: { ...json<CloseDraft | null>('closeDraft', null), allowNull: true, defaultValue: null },
      causeProcedureId: { type: DataTypes.INTEGER.UNSIGNED, allowNull: true },
      causeKey: { type: DataTypes.STRING(40), allowNull: true },
      outcome: { type: DataTypes.ENUM(...OUTCOMES), allowNull: true },
      parts: { ...json<StoredPart[]>('parts', []), defaultValue: [] },
      partsCostCents: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false, defaultValue: 0 },
      minutes: { type: DataTypes.INTEGER.UNSIGNED, allowNull: true },
      replacementCostCents: { type: DataTypes.INTEGER.UNSIGNED, allowNull: true },
      photoIds: { ...json<number[]>('photoIds', []), defaultValue: [] },
      comeback: { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: false },
      version: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false, defaultValue: 1 },
      startedAt: { type: DataTypes.DATE, allowNull: false, defaultValue: DataTypes.NOW },
      closedAt: { type: DataTypes.DATE, allowNull: true },
      createdAt: DataTypes.DATE,
      updatedAt: DataTypes.DATE,
    }, { sequelize, tableName: 'repair_records' })
  }
}
