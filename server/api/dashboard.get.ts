import { z } from 'zod'
import type { DashboardDto } from '#shared/types/records'
import { roleAtLeast } from '#shared/types/roles'
import { dashboard } from '../services/dashboard/figures'

const Query = z.object({ from: z.iso.date().optional(), to: z.iso.date().optional() })

// Editors see the team's figures; everyone else sees their own.
export default defineEventHandler(async (event) => {
  const user = await requireUser(event)
  const q = await getValidatedQuery(event, parseWith(Query))
  const to = q.to ? new Date(new Date(`${q.to}T00:00:00Z`).getTime() + 86_400_000) : new Date(Date.now() + 60_000)
  const from = q.from ? new Date(`${q.from}T00:00:00Z`) : new Date(to.getTime() - 26 * 7 * 86_400_000)
  if (from >= to) throw createError({ statusCode: 400, message: 'from must be before to', data: { fields: { from: 'must be before to' } } })
  return await dashboard({ from, to }, roleAtLeast(user.role, 'editor') ? undefined : user.id) satisfies DashboardDto
})
