// A page the server rendered brings the session in its payload (app/plugins/session.server.ts);
// otherwise (an error page rendered without the app, say) the browser asks for it.
export default defineNuxtPlugin({
  name: 'benchlore-session-client',
  enforce: 'pre',
  async setup(nuxtApp) {
    if (!nuxtApp.payload.serverRendered) await useUserSession().fetch()
  },
})
