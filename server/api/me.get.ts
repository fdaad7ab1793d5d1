import { toUserDto } from '../services/accounts'

export default defineEventHandler(async (event) => {
  const user = await requireUser(event)
  return { user: toUserDto(user) }
})
