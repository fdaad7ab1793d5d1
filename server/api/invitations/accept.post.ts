import { AcceptInviteBody } from '#shared/types/auth'
import { acceptInvitation, toUserDto } from '../../services/accounts'

export default defineEventHandler(async (event) => {
  const body = await readValidatedBody(event, parseWith(AcceptInviteBody))
  const user = await acceptInvitation(body, hashPassword)
  await startSession(event, user)
  return { user: toUserDto(user) }
})
