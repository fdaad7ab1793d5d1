import type { Role } from '#shared/types/roles'

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
  { to: '/procedures', label: 'Procedures', role: 'technician', testId: 'nav-procedures' },
  { to: '/records', label: 'Records', role: 'technician', testId: 'nav-records' },
  { to: '/captures', label: 'Waveforms', role: 'technician', testId: 'nav-captures' },
  { to: '/dashboard', label: 'Dashboard', role: 'technician', testId: 'nav-dashboard' },
  { to: '/my-work', label: 'My work', role: 'author', testId: 'nav-my-work' },
  { to: '/review', label: 'Review', role: 'editor', testId: 'nav-review' },
  { to: '/vocabulary', label: 'Vocabulary', role: 'editor', testId: 'nav-vocabulary' },
  { to: '/admin/users', label: 'People', role: 'admin', testId: 'nav-people' },
  { to: '/admin/mail', label: 'Sent mail', role: 'admin', testId: 'nav-mail' },
]
