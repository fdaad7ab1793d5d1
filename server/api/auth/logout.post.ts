import type { SignedOutDto } from '#shared/types/auth'
import { endAllSessions } from '../../services/accounts/sessions'

// Signing out revokes every session of the user, not only this cookie: a sealed cookie copied
// elsewhere stops working at its next request too.
export default defineEventHandler(async (event) => {
  const session = await getUserSession(event)
  if (session.user?.id) await endAllSessions(session.user.id)
  await clearUserSession(event)
  return { ok: true } satisfies SignedOutDto
})
