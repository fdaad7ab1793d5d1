import type { PageSession } from '#shared/types/auth'
import { toUserDto } from '../services/accounts'

// A page rendered on the server needs to know who is signed in before it renders. Without this,
// the app asks through internal requests to /api/_auth/session and /api/me, each of which opens
// the sealed cookie and reads the user row again. Here the user is checked once, exactly as an API
// route checks it (requireUser: session version, active), and handed to the renderer on the
// event; app/plugins/session.server.ts puts it where useUserSession() and useAccount() read it.
// Anyone not signed in, or whose session has ended, renders as signed out, as before.
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
