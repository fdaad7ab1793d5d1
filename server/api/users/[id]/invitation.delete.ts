import { z } from 'zod'
import type { InvitationWithdrawnDto } from '#shared/types/auth'
import { withdrawInvitation } from '../../../services/accounts/invitations'
import { adminUserDto } from '../../../services/accounts/users'

const Params = z.object({ id: z.coerce.number().int().positive() })

export default defineEventHandler(async (event) => {
  const actor = await requireRole(event, 'admin')
  const { id } = await getValidatedRouterParams(event, parseWith(Params))
  return { user: await adminUserDto(await withdrawInvitation(id, actor)) } satisfies InvitationWithdrawnDto
})
