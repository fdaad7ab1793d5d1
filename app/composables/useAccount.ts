import type { UserDto } from '#shared/types/auth'
import { roleAtLeast, type Role } from '#shared/types/roles'
import { useOfflineStore } from '~/stores/offline'
import { dropOtherCaches, keepAccount } from '~/utils/offlineData'

/** The signed-in person (name and e-mail from /api/me; role from the session). */
export function useAccount() {
  const { loggedIn, user, clear, fetch: refreshSession } = useUserSession()
  const me = useState<UserDto | null>('benchlore-me', () => null)
  const role = computed<Role | undefined>(() => user.value?.role)
  const can = (needed: Role) => roleAtLeast(role.value, needed)

  async function loadMe() {
    if (!loggedIn.value) {
      me.value = null
      return
    }
    // Already known for this person (the server found it before rendering the page).
    if (me.value && me.value.id === user.value?.id) return
    try {
      const res = await useRequestFetch()('/api/me')
      me.value = res.user
    }
    catch {
      me.value = null
      await clear()
    }
  }

  async function signOut() {
    const offline = useOfflineStore()
    // Saves typed with no connection go out first; any still waiting stay on the phone for this
    // person's next sign-in. The procedures and records kept for reading are theirs alone: dropped.
    if (offline.waiting && offline.online) await offline.sync()
    await $fetch('/api/auth/logout', { method: 'POST' }).catch(() => undefined)
    await clear().catch(() => undefined)
    me.value = null
    await keepAccount(null)
    await dropOtherCaches(null)
    await navigateTo('/login')
  }

  return { loggedIn, role, me, can, loadMe, signOut, refreshSession }
}
