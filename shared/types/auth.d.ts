import type { Role } from './auth'

// The sealed session carries only what authorisation needs; everything else is read from the
// database at each request (so a role change or a deactivation takes effect at once).
declare module '#auth-utils' {
  interface User {
    id: number
    role: Role
    /** The user's session version when this session was issued. */
    sv: number
  }
  interface UserSession {
    loggedInAt?: number
  }
}

export {}
