import type { DeviceTypeDto, ListDto } from '#shared/types/procedure-api'
import { listDeviceTypes } from '../../services/vocabulary/device-types'

export default defineEventHandler(async (event) => {
  await requireUser(event)
  return { data: await listDeviceTypes() } satisfies ListDto<DeviceTypeDto>
})
