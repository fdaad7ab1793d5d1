// Roles without zod, so that what every page loads (the sign-in check, the header) does not
// carry the schema library; the schemas live in ./auth, which imports these. Import roles
// from here, on both sides.

/** Roles in ascending order: each includes every role before it. */
export const ROLES = ['technician', 'author', 'editor', 'admin'] as const
export type Role = (typeof ROLES)[number]

export const ROLE_LABELS: Record<Role, string> = {
  technician: 'Technician',
  author: 'Author',
  editor: 'Editor',
  admin: 'Admin',
}

export function roleAtLeast(role: Role | undefined | null, needed: Role): boolean {
  if (!role) return false
  return ROLES.indexOf(role) >= ROLES.indexOf(needed)
}
