import { UniqueConstraintError } from 'sequelize'
import type { DeviceTypeDto } from '../../../shared/types/procedure-api'
import type { User } from '../../db'
import { DeviceType, inTransaction } from '../../db'
import { recordAudit } from '../audit/audit-log'
import { notifyVocabularyChanged } from '../change-log/notify'
import { notFound } from '../errors'
import { assertNameFree, duplicate, freeSlug } from './names'

export function toDeviceTypeDto(d: DeviceType): DeviceTypeDto {
  return { id: d.id, slug: d.slug, name: d.name, description: d.description }
}

export async function listDeviceTypes(): Promise<DeviceTypeDto[]> {
  return (await DeviceType.findAll({ order: [['name', 'ASC']] })).map(toDeviceTypeDto)
}

export async function createDeviceType(input: { name: string, description: string }, actor: User): Promise<DeviceType> {
  await assertNameFree(DeviceType, input.name)
  try {
    return await inTransaction(async (transaction) => {
      const d = await DeviceType.create({ slug: await freeSlug(DeviceType, input.name, transaction), name: input.name, description: input.description }, { transaction })
      await recordAudit({ actorId: actor.id, action: 'device_type.created', entityType: 'device_type', entityId: d.id, after: { name: d.name, slug: d.slug } }, transaction)
      await notifyVocabularyChanged(transaction)
      return d
    })
  }
  catch (error) {
    if (error instanceof UniqueConstraintError) throw duplicate('device type', input.name)
    throw error
  }
}

export async function updateDeviceType(id: number, patch: { name?: string, description?: string }, actor: User): Promise<DeviceType> {
  const d = await DeviceType.findByPk(id)
  if (!d) throw notFound('device type')
  if (patch.name) await assertNameFree(DeviceType, patch.name, id)
  await inTransaction(async (transaction) => {
    const before = { name: d.name, description: d.description }
    await d.update(patch, { transaction })
    await recordAudit({ actorId: actor.id, action: 'device_type.updated', entityType: 'device_type', entityId: id, before, after: { name: d.name, description: d.description } }, transaction)
    await notifyVocabularyChanged(transaction)
  })
  return d
}
