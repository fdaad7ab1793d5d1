// One runtime config for every request. Nitro gives each request (every server-rendered page and
// every route it calls internally) a deep copy of the config with the NUXT_* environment applied
// again, the first time anything asks for `useRuntimeConfig(event)` — which the page renderer and
// the session helpers always do. That copy is meant for runtimes whose environment differs per
// request; a Node server reads its environment once at start, so the copy is always identical to
// the shared config, which Nitro has already built and frozen. Handing every request the shared
// one took about a sixth of the CPU time of rendering the sign-in page (`npm run bench:http`).
// Where a future Nitro stores the per-request config elsewhere, this does nothing and requests
// simply get their copy again.
export default defineNitroPlugin((nitroApp) => {
  const shared = useRuntimeConfig()
  nitroApp.hooks.hook('request', (event) => {
    const nitro = event.context.nitro as { runtimeConfig?: unknown } | undefined
    if (nitro && !nitro.runtimeConfig) nitro.runtimeConfig = shared
  })
})
