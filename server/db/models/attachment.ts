import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type Sequelize } from 'sequelize'

export const ATTACHMENT_KINDS = ['image', 'capture'] as const
export type AttachmentKind = (typeof ATTACHMENT_KINDS)[number]

/** An object in the bucket (re-encoded photo or raw capture file); the row exists only once the object does. */
export class Attachment extends Model<InferAttributes<Attachment>, InferCreationAttributes<Attachment>> {
  declare id: CreationOptional<number>
  declare objectKey: string
  declare thumbnailKey: string | null
  declare kind: AttachmentKind
  declare mime: string
  declare bytes: number
  declare width: number | null
  declare height: number | null
  declare sha256: string
  declare caption: CreationOptional<string>
  declare uploadedById: number
  declare createdAt: CreationOptional<Date>

  static initModel(sequelize: Sequelize) {
    Attachment.init({
      id: { type: DataTypes.INTEGER.UNSIGNED, autoIncrement: true, primaryKey: true },
      objectKey: { type: DataTypes.STRING(200), allowNull: false, unique: true },
      thumbnailKey: { type: DataTypes.STRING(200), allowNull: true },
      kind: { type: DataTypes.ENUM(...ATTACHMENT_KINDS), allowNull: false },
      mime: { type: DataTypes.STRING(80), allowNull: false },
      bytes: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
      width: { type: DataTypes.INTEGER.UNSIGNED, allowNull: true },
      height: { type: DataTypes.INTEGER.UNSIGNED, allowNull: true },
      sha256: { type: DataTypes.CHAR(64), allowNull: false },
      caption: { type: DataTypes.STRING(300), allowNull: false, defaultValue: '' },
      uploadedById: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
      createdAt: DataTypes.DATE,
    }, { sequelize, tableName: 'attachments', updatedAt: false })
  }
}
