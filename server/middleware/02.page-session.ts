import type { PageSession } from '#shared/types/auth'
import { toUserDto } from '../services/accounts/users'

// Who is signed in, for a page about to render on the server: checked once here, exactly as an
// API route checks it (requireUser: session version, active), and handed to the renderer on the
// event; app/plugins/session.server.ts puts it where useUserSession() and useAccount() read it.
// Rendering then needs no internal request to /api/_auth/session or /api/me, each of which would
// open the sealed cookie and read the user row again. Anyone not signed in, or whose session has
// ended, renders as signed out.
export default defineEventHandler(async (event) => {
  if (event.method !== 'GET' || event.path.startsWith('/api/') || event.path.startsWith('/_nuxt/')) return
  if (!getCookie(event, SESSION_COOKIE)) return
  try {
    const user = await requireUser(event)
    const page: PageSession = { session: { user: { id: user.id, role: user.role, sv: user.sessionVersion } }, me: toUserDto(user) }
    event.context.pageSession = page
  }
  catch {
    // Ended session (requireUser already cleared the cookie) or database away: signed out.
  }
})
