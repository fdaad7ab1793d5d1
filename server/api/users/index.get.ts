import type { AdminUserDto } from '#shared/types/auth'
import type { ListDto } from '#shared/types/procedure-api'
import { listUsers } from '../../services/accounts/users'

export default defineEventHandler(async (event) => {
  await requireRole(event, 'admin')
  return { data: await listUsers() } satisfies ListDto<AdminUserDto>
})
