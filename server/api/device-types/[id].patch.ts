import { z } from 'zod'
import { DeviceTypePatchBody, type DeviceTypeSavedDto } from '#shared/types/vocabulary'
import { toDeviceTypeDto, updateDeviceType } from '../../services/vocabulary/device-types'

const Params = z.object({ id: z.coerce.number().int().positive() })

export default defineEventHandler(async (event) => {
  const actor = await requireRole(event, 'editor')
  const { id } = await getValidatedRouterParams(event, parseWith(Params))
  const body = await readValidatedBody(event, parseWith(DeviceTypePatchBody))
  return { deviceType: toDeviceTypeDto(await updateDeviceType(id, body, actor)) } satisfies DeviceTypeSavedDto
})
