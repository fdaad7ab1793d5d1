import { z } from 'zod'
import type { CaptureDto } from '#shared/types/captures'
import { captureDto, findCapture } from '../../../services/captures/store'

const Params = z.object({ id: z.coerce.number().int().positive() })

export default defineEventHandler(async (event) => {
  await requireUser(event)
  const { id } = await getValidatedRouterParams(event, parseWith(Params))
  return await captureDto(await findCapture(id)) satisfies CaptureDto
})
