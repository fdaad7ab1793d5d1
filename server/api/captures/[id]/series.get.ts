import { z } from 'zod'
import { SeriesQuery, type SeriesDto } from '#shared/types/captures'
import { captureSeries } from '../../../services/captures/samples'
import { findCapture } from '../../../services/captures/store'

const Params = z.object({ id: z.coerce.number().int().positive() })

// A zoomed window, min/max decimated from the stored samples (real detail, not interpolation).
export default defineEventHandler(async (event) => {
  await requireUser(event)
  const { id } = await getValidatedRouterParams(event, parseWith(Params))
  const q = await getValidatedQuery(event, parseWith(SeriesQuery))
  return await captureSeries(await findCapture(id), useObjectStore(), q) satisfies SeriesDto
})
