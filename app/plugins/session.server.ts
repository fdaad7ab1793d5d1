import type { PageSession, UserDto } from '#shared/types/auth'

// Who is signed in, for this server render: found by server/middleware/02.page-session.ts on the
// page request itself, so rendering asks no internal route for it. The states are the ones
// useUserSession() (nuxt-auth-utils, loadStrategy 'none' in nuxt.config.ts) and useAccount() read;
// the payload carries them to the browser.
export default defineNuxtPlugin({
  name: 'benchlore-session',
  enforce: 'pre',
  setup() {
    const found = useRequestEvent()?.context.pageSession as PageSession | undefined
    useState('nuxt-session').value = found?.session ?? null
    useState('nuxt-auth-ready').value = true
    useState<UserDto | null>('benchlore-me').value = found?.me ?? null
  },
})
