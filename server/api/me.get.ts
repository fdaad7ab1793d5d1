import type { MeDto } from '#shared/types/auth'
import { toUserDto } from '../services/accounts/users'

export default defineEventHandler(async (event) => {
  const user = await requireUser(event)
  return { user: toUserDto(user) } satisfies MeDto
})
