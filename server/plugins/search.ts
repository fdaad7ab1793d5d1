// Builds this instance's search index at start (in chunks, without blocking requests) and
// follows the database's change log every couple of seconds.
export default defineNitroPlugin((nitroApp) => {
  const search = useSearch()
  const pollMs = Number(useRuntimeConfig().search.pollMs) || 1500
  // Database not reachable yet: try the whole load again shortly.
  const begin = (): void => void search.start().catch(() => setTimeout(begin, 3000).unref())
  begin()
  const timer = setInterval(() => {
    search.poll().catch(() => undefined)
  }, pollMs)
  timer.unref()
  nitroApp.hooks.hook('close', () => clearInterval(timer))
})
