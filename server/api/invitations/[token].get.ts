import { z } from 'zod'
import type { InvitationViewDto } from '#shared/types/auth'
import { findInvitation } from '../../services/accounts/invitations'

const Params = z.object({ token: z.string().min(20).max(200) })

// Public: the invitee has no account yet. Answers only what the acceptance page needs.
export default defineEventHandler(async (event) => {
  const { token } = await getValidatedRouterParams(event, parseWith(Params))
  const { status, user, invitation } = await findInvitation(token)
  if (status !== 'valid' || !user || !invitation) return { status } satisfies InvitationViewDto
  return { status, email: user.email, name: user.name, role: invitation.role, expiresAt: invitation.expiresAt.toISOString() } satisfies InvitationViewDto
})
