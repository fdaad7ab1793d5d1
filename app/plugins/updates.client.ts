// A new build waits (registerType 'prompt' in nuxt.config.ts) until the next page change, so
// nobody is left on an old build and nobody loses a page mid-reading: the page being left has
// saved its work by the time the route has changed (the record page saves on leaving).
export default defineNuxtPlugin({
  name: 'benchlore-updates',
  dependsOn: ['vite-pwa:nuxt:client:plugin'],
  setup() {
    const { $pwa } = useNuxtApp()
    useRouter().afterEach((to, from) => {
      if (to.fullPath === from.fullPath || !$pwa?.needRefresh) return
      void $pwa.updateServiceWorker(true)
    })
  },
})
