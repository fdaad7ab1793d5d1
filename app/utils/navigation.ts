import type { Role } from '#shared/types/auth'

export interface NavItem {
  to: string
  label: string
  /** The least role that sees the item (roles include the ones below them). */
  role: Role
  testId: string
}

/** The app's main navigation; each page enforces its role again on the server. */
export const NAV_ITEMS: NavItem[] = [
  { to: '/', label: 'Bench', role: 'technician', testId: 'nav-bench' },
  { to: '/admin/users', label: 'People', role: 'admin', testId: 'nav-people' },
  { to: '/admin/mail', label: 'Sent mail', role: 'admin', testId: 'nav-mail' },
]
