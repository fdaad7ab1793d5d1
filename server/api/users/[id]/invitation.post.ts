import { z } from 'zod'
import type { InvitationSentDto } from '#shared/types/auth'
import { resendInvitation } from '../../../services/accounts/invitations'
import { toUserDto } from '../../../services/accounts/users'

const Params = z.object({ id: z.coerce.number().int().positive() })

// A new link for someone who has not joined yet; the link sent before stops working.
export default defineEventHandler(async (event) => {
  const actor = await requireRole(event, 'admin')
  const { id } = await getValidatedRouterParams(event, parseWith(Params))
  const { user, expiresAt, replaced } = await resendInvitation(id, actor, useRuntimeConfig().appOrigin)
  setResponseStatus(event, 201)
  return { user: toUserDto(user), expiresAt: expiresAt.toISOString(), replaced } satisfies InvitationSentDto
})
