import { AcceptInviteBody, type MeDto } from '#shared/types/auth'
import { acceptInvitation } from '../../services/accounts/invitations'
import { toUserDto } from '../../services/accounts/users'

export default defineEventHandler(async (event) => {
  const body = await readValidatedBody(event, parseWith(AcceptInviteBody))
  const user = await acceptInvitation(body, hashPassword)
  await startSession(event, user)
  return { user: toUserDto(user) } satisfies MeDto
})
