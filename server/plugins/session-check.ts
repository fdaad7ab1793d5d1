import { User } from '../db'

// The client asks nuxt-auth-utils for its session (/api/_auth/session); a session whose version
// was revoked, or whose user was deactivated, is reported as ended there too.
export default defineNitroPlugin(() => {
  sessionHooks.hook('fetch', async (session, event) => {
    const claim = session.user
    if (!claim?.id) return
    const user = await User.findByPk(claim.id, { attributes: ['id', 'active', 'sessionVersion', 'role'] })
    if (!user || !user.active || user.sessionVersion !== claim.sv) {
      await clearUserSession(event)
      throw createError({ statusCode: 401, message: 'Your session has ended. Sign in again.' })
    }
  })
})
