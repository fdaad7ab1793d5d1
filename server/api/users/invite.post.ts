import { InviteBody, type InvitationSentDto } from '#shared/types/auth'
import { inviteUser } from '../../services/accounts/invitations'
import { toUserDto } from '../../services/accounts/users'

export default defineEventHandler(async (event) => {
  const actor = await requireRole(event, 'admin')
  const body = await readValidatedBody(event, parseWith(InviteBody))
  const { user, expiresAt } = await inviteUser(body, actor, useRuntimeConfig().appOrigin)
  setResponseStatus(event, 201)
  return { user: toUserDto(user), expiresAt: expiresAt.toISOString() } satisfies InvitationSentDto
})
