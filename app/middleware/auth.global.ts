import { roleAtLeast, type Role } from '#shared/types/roles'

const PUBLIC = [/^\/login$/, /^\/invite\//]

// Navigation comfort only: every rule is enforced again by the server routes.
export default defineNuxtRouteMiddleware((to) => {
  if (PUBLIC.some(p => p.test(to.path))) return
  const { loggedIn, user } = useUserSession()
  if (!loggedIn.value) {
    return navigateTo({ path: '/login', query: to.fullPath !== '/' ? { next: to.fullPath } : {} })
  }
  const needed = to.meta.role as Role | undefined
  if (needed && !roleAtLeast(user.value?.role, needed)) {
    throw createError({ statusCode: 403, statusMessage: 'Not for your role', message: 'This page needs a role you do not have.', fatal: true })
  }
})
