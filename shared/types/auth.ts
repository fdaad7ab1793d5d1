import { z } from 'zod'
import { ROLES, type Role } from './roles'

export const PASSWORD_MIN = 12

export const Email = z.string().trim().toLowerCase().max(254).email('must be an e-mail address')
export const Password = z.string().min(PASSWORD_MIN, `must be at least ${PASSWORD_MIN} characters`).max(200, 'must be at most 200 characters')

export const LoginBody = z.object({
  email: Email,
  // Length rules are not checked at sign-in: a wrong password of any length is just wrong.
  password: z.string().min(1, 'is required').max(200),
})

export const InviteBody = z.object({
  email: Email,
  role: z.enum(ROLES),
  name: z.string().trim().max(120).optional(),
})

export const AcceptInviteBody = z.object({
  token: z.string().min(20).max(200),
  name: z.string().trim().min(2, 'must be at least 2 characters').max(120),
  password: Password,
})

export const UserPatchBody = z
  .object({
    role: z.enum(ROLES).optional(),
    active: z.boolean().optional(),
    name: z.string().trim().min(2).max(120).optional(),
  })
  .refine(b => b.role !== undefined || b.active !== undefined || b.name !== undefined, { message: 'nothing to change: give role, active or name' })

export interface UserDto {
  id: number
  email: string
  name: string
  role: Role
}

/**
 * Who is signed in, as the server found it before rendering a page (server/middleware/
 * 02.page-session.ts → app/plugins/session.server.ts): the session as /api/_auth/session would
 * answer it, and the person as /api/me would.
 */
export interface PageSession {
  session: { user: { id: number, role: Role, sv: number } }
  me: UserDto
}

export interface AdminUserDto extends UserDto {
  active: boolean
  lastLoginAt: string | null
  createdAt: string
  invitationPending: boolean
  /** The latest invitation of someone who has not joined yet (null once they have). */
  invitation: { status: Exclude<InvitationStatus, 'used' | 'unknown'>, sentAt: string, expiresAt: string } | null
}

/** GET /api/me, and signing in (POST /api/auth/login, /api/invitations/accept): who is signed in. */
export interface MeDto { user: UserDto }

/** POST /api/auth/logout */
export interface SignedOutDto { ok: true }

/** PATCH /api/users/[id] */
export interface AdminUserSavedDto { user: AdminUserDto }

/** POST /api/users/invite, POST /api/users/[id]/invitation (a new link; `replaced` earlier links stopped working) */
export interface InvitationSentDto { user: UserDto, expiresAt: string, replaced?: number }

/** DELETE /api/users/[id]/invitation */
export interface InvitationWithdrawnDto { user: AdminUserDto }

/** `withdrawn`: by an admin, or by a role change or deactivation before it was accepted. */
export type InvitationStatus = 'valid' | 'used' | 'expired' | 'withdrawn' | 'unknown'

/** GET /api/invitations/[token]: the status, and for a valid link what the acceptance page shows. */
export interface InvitationViewDto {
  status: InvitationStatus
  email?: string
  name?: string
  role?: Role
  expiresAt?: string
}
