import type { H3Event } from 'h3'
import { LRUCache } from 'lru-cache'
import { roleAtLeast, ROLE_LABELS, type Role } from '#shared/types/roles'
import { User } from '../db'

/**
 * The signed-in user, loaded fresh from the database on every request. The sealed cookie
 * carries id, role and the session version it was issued under; a deactivated user or a bumped
 * version (sign-out, role change, deactivation) ends the session here, at the next request.
 */
export async function requireUser(event: H3Event): Promise<User> {
  const cached = event.context.benchloreUser as User | undefined
  if (cached) return cached
  const claim = await sessionClaim(event)
  if (!claim?.id) throw createError({ statusCode: 401, message: 'Sign in to continue.' })
  // Everything but the password hash, which no route needs after sign-in.
  const user = await User.findByPk(claim.id, { attributes: { exclude: ['passwordHash'] } })
  if (!user || !user.active || user.sessionVersion !== claim.sv) {
    await clearUserSession(event)
    throw createError({ statusCode: 401, message: 'Your session has ended. Sign in again.' })
  }
  event.context.benchloreUser = user
  return user
}

/** The session cookie's name (runtimeConfig.session.name in nuxt.config.ts). */
export const SESSION_COOKIE = 'benchlore-session'
const CLAIM_TTL_MS = 60_000
type Claim = { id: number, role: Role, sv: number }
// Entries expire CLAIM_TTL_MS after they were filled, and the least recently used go first when
// full; nothing else empties it, since what a given seal says never changes.
const claims = new LRUCache<string, Claim>({ max: 5000, ttl: CLAIM_TTL_MS })

/**
 * What the sealed cookie says. Unsealing costs a key derivation and an HMAC, and a server-
 * rendered page calls several routes with the same cookie; the result is kept per cookie value
 * for a minute (the seal is deterministic, and the user row is still checked on every request).
 */
async function sessionClaim(event: H3Event): Promise<Claim | undefined> {
  const raw = getCookie(event, SESSION_COOKIE)
  const hit = raw ? claims.get(raw) : undefined
  if (hit) return hit
  const claim = (await getUserSession(event)).user as Claim | undefined
  if (raw && claim?.id) claims.set(raw, claim)
  return claim
}

/** Every protected route calls this (roles include the ones below them). */
export async function requireRole(event: H3Event, role: Role): Promise<User> {
  const user = await requireUser(event)
  if (!roleAtLeast(user.role, role)) {
    throw createError({ statusCode: 403, message: `This needs the ${ROLE_LABELS[role].toLowerCase()} role or above.` })
  }
  return user
}

export async function startSession(event: H3Event, user: User): Promise<void> {
  await replaceUserSession(event, { user: { id: user.id, role: user.role, sv: user.sessionVersion }, loggedInAt: Date.now() })
}

export function clientIp(event: H3Event): string {
  return getRequestIP(event, { xForwardedFor: useRuntimeConfig().trustProxy === true }) ?? 'unknown'
}
