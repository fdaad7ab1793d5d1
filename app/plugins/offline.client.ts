import { useOfflineStore } from '~/stores/offline'
import { keepOfflineCopy } from '~/utils/offlineCopy'
import { dropOtherCaches, keepAccount, keptAccount } from '~/utils/offlineData'

// Who the data kept on this phone belongs to, and when waiting saves go out.
// - Signed in: this person's account is noted for the service worker, anyone else's kept
//   answers are dropped (their saves waiting on the phone stay for when they sign in again), and
//   the session and account answers are kept so that a page opened with no connection knows
//   who is working (a page rendered on the server never asked for them in the browser).
// - Nobody signed in: whatever the last person left waiting is counted for the banner and
//   waits for their sign-in; nothing is sent.
export default defineNuxtPlugin({
  name: 'benchlore-offline',
  dependsOn: ['benchlore-session-client'],
  setup(nuxtApp) {
    const offline = useOfflineStore(nuxtApp.$pinia as Parameters<typeof useOfflineStore>[0])
    const { user, session } = useUserSession()
    const router = useRouter()
    const me = useState<{ id: number, name: string, email: string, role: string } | null>('benchlore-me')

    offline.setOnline(navigator.onLine)
    window.addEventListener('online', () => offline.setOnline(true))
    window.addEventListener('offline', () => offline.setOnline(false))

    async function follow(id: number | null) {
      if (id === null) {
        const last = await keptAccount()
        await offline.start(last?.id ?? null)
        if (offline.waiting) offline.phase = 'signed-out'
        return
      }
      const known = me.value?.id === id ? me.value : null
      await keepAccount({ id, role: user.value?.role ?? '', name: known?.name ?? '', email: known?.email ?? '' })
      await dropOtherCaches(id)
      await keepOfflineCopy('/api/_auth/session', session.value, id)
      if (known) await keepOfflineCopy('/api/me', { user: known }, id)
      await offline.start(id)
      if (offline.online) void offline.sync()
    }

    // A record page rendered on the server fetched its record there, out of the service worker's
    // sight: the copy it rendered is kept, so the record opens with no connection, on the version
    // its waiting saves build on.
    nuxtApp.hook('page:finish', () => {
      const id = /^\/records\/(\d+)$/.exec(router.currentRoute.value.path)?.[1]
      const answer = id ? nuxtApp.payload.data[`record-${id}`] : undefined
      if (answer && offline.online) void keepOfflineCopy(`/api/records/${id}`, answer, user.value?.id ?? null)
    })

    watch(() => user.value?.id ?? null, id => void follow(id), { immediate: true })
    watch(() => me.value, (now) => {
      if (now && now.id === user.value?.id) void follow(now.id)
    })
  },
})
