import { DataTypes, Model, type InferAttributes, type InferCreationAttributes, type Sequelize, type Transaction } from 'sequelize'
import { Attachment } from './attachment'

export const ATTACHMENT_OWNERS = ['revision', 'record'] as const
export type AttachmentOwner = (typeof ATTACHMENT_OWNERS)[number]

/**
 * One file shown by one revision (a step image) or one record (a bench photo). Rewritten with
 * its owner, by the hooks in ./index.ts, so it cannot drift from the content it mirrors; who may
 * open a file follows from its owners (server/services/uploads/visibility.ts).
 */
export class AttachmentUse extends Model<InferAttributes<AttachmentUse>, InferCreationAttributes<AttachmentUse>> {
  declare attachmentId: number
  declare ownerType: AttachmentOwner
  declare ownerId: number

  static initModel(sequelize: Sequelize) {
    AttachmentUse.init({
      attachmentId: { type: DataTypes.INTEGER.UNSIGNED, primaryKey: true },
      ownerType: { type: DataTypes.ENUM(...ATTACHMENT_OWNERS), primaryKey: true },
      ownerId: { type: DataTypes.INTEGER.UNSIGNED, primaryKey: true },
    }, { sequelize, tableName: 'attachment_uses', timestamps: false })
  }

  /** Makes the stored uses of one owner exactly `ids` (files that do not exist are left out). */
  static async replaceFor(ownerType: AttachmentOwner, ownerId: number, ids: number[], transaction?: Transaction | null): Promise<void> {
    await AttachmentUse.destroy({ where: { ownerType, ownerId }, transaction: transaction ?? undefined })
    const wanted = [...new Set(ids.filter(id => Number.isInteger(id) && id > 0))]
    if (!wanted.length) return
    const existing = await Attachment.findAll({ where: { id: wanted }, attributes: ['id'], raw: true, transaction: transaction ?? undefined })
    if (!existing.length) return
    await AttachmentUse.bulkCreate(existing.map(a => ({ attachmentId: a.id, ownerType, ownerId })), { transaction: transaction ?? undefined })
  }
}
