import { DeviceTypeCreateBody, type DeviceTypeSavedDto } from '#shared/types/vocabulary'
import { createDeviceType, toDeviceTypeDto } from '../../services/vocabulary/device-types'

export default defineEventHandler(async (event) => {
  const actor = await requireRole(event, 'editor')
  const body = await readValidatedBody(event, parseWith(DeviceTypeCreateBody))
  const deviceType = await createDeviceType(body, actor)
  setResponseStatus(event, 201)
  return { deviceType: toDeviceTypeDto(deviceType) } satisfies DeviceTypeSavedDto
})
