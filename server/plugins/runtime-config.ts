// One runtime config for every request. Nitro otherwise gives each request (every server-rendered
// page and every route it calls internally) its own deep copy of the config, with the NUXT_*
// environment applied again, the first time anything asks for `useRuntimeConfig(event)`, which
// the page renderer and the session helpers always do. That copy serves runtimes whose
// environment differs per request; a Node server reads its environment once at start, so the copy
// would equal the shared config that Nitro has already built and frozen. Making it costs about a
// sixth of the CPU time of rendering the sign-in page (`npm run bench:http` measures the routes).
// If Nitro keeps the per-request config somewhere else, this hook sets nothing and each request
// gets its own copy.
export default defineNitroPlugin((nitroApp) => {
  const shared = useRuntimeConfig()
  nitroApp.hooks.hook('request', (event) => {
    const nitro = event.context.nitro as { runtimeConfig?: unknown } | undefined
    if (nitro && !nitro.runtimeConfig) nitro.runtimeConfig = shared
  })
})
