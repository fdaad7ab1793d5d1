import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type Sequelize } from 'sequelize'
import type { CaptureDto, SeriesDto } from '../../../shared/types/captures'
import type { CutType, WaveformFeatures } from '../../../shared/utils/waveform/analyse'

const json = (field: string) => ({
  type: DataTypes.JSON,
  allowNull: false,
  get(this: Model) {
    const raw = this.getDataValue(field) as unknown
    return typeof raw === 'string' ? JSON.parse(raw) : raw
  },
})

/**
 * An analysed waveform capture. The raw export is an attachment (kind `capture`); the parsed
 * samples are kept as a binary object for zooming; features and an overview series live here.
 */
export class Capture extends Model<InferAttributes<Capture>, InferCreationAttributes<Capture>> {
  declare id: CreationOptional<number>
  declare attachmentId: number
  declare samplesKey: string
  declare label: CreationOptional<string>
  declare recordId: number | null
  /** The step of the record's procedure the capture was taken for. */
  declare stepKey: string | null
  /** features.cutType, kept in a column of its own for the list's filter. */
  declare cutType: CutType
  declare uploadedById: number
  declare features: WaveformFeatures
  /** The analysis details the capture page shows (cut, frequency, cut points, half-cycles…). */
  declare analysis: CaptureDto['analysis']
  declare overview: SeriesDto
  declare createdAt: CreationOptional<Date>

  static initModel(sequelize: Sequelize) {
    Capture.init({
      id: { type: DataTypes.INTEGER.UNSIGNED, autoIncrement: true, primaryKey: true },
      attachmentId: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
      samplesKey: { type: DataTypes.STRING(200), allowNull: false },
      label: { type: DataTypes.STRING(160), allowNull: false, defaultValue: '' },
      recordId: { type: DataTypes.INTEGER.UNSIGNED, allowNull: true },
      stepKey: { type: DataTypes.STRING(40), allowNull: true },
      cutType: { type: DataTypes.STRING(20), allowNull: true },
      uploadedById: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
      features: json('features'),
      analysis: json('analysis'),
      overview: json('overview'),
      createdAt: DataTypes.DATE,
    }, { sequelize, tableName: 'captures', updatedAt: false })
  }
}
