import type { AdminUserDto, UserDto } from '../../../shared/types/auth'
import type { Role } from '../../../shared/types/roles'
import { type Invitation, User, inTransaction } from '../../db'
import { writeRuleGuard } from '../../db/guards'
import { recordAudit } from '../audit/audit-log'
import { conflict, notFound } from '../errors'
import { latestInvitations, revokeOpenInvitations } from './invitations'

export function toUserDto(u: User): UserDto {
  return { id: u.id, email: u.email, name: u.name, role: u.role }
}

/** A person as the admin sees them, with their latest invitation when they have not joined. */
export function toAdminUserDto(u: User, latest: Invitation | undefined): AdminUserDto {
  const invitation: AdminUserDto['invitation'] = !u.passwordHash && latest && !latest.acceptedAt
    ? {
        status: latest.revokedAt || !u.active ? 'withdrawn' : latest.expiresAt.getTime() <= Date.now() ? 'expired' : 'valid',
        sentAt: latest.createdAt.toISOString(),
        expiresAt: latest.expiresAt.toISOString(),
      }
    : null
  return {
    ...toUserDto(u),
    active: u.active,
    lastLoginAt: u.lastLoginAt?.toISOString() ?? null,
    createdAt: u.createdAt.toISOString(),
    invitationPending: invitation?.status === 'valid',
    invitation,
  }
}

/** One person as the admin's list shows them. */
export async function adminUserDto(u: User): Promise<AdminUserDto> {
  return toAdminUserDto(u, (await latestInvitations([u.id])).get(u.id))
}

export async function listUsers(): Promise<AdminUserDto[]> {
  const users = await User.findAll({ order: [['active', 'DESC'], ['role', 'DESC'], ['name', 'ASC']] })
  const latest = await latestInvitations(users.filter(u => !u.passwordHash).map(u => u.id))
  return users.map(u => toAdminUserDto(u, latest.get(u.id)))
}

/**
 * Role and activation changes by an admin. Both end the user's sessions, and both withdraw an
 * invitation not yet accepted (its link carries the decision taken before). The last active
 * admin can be neither demoted nor deactivated: the check runs under row locks, and a change that
 * takes an admin away also writes the `active-admins` guard row, so two admins demoting each
 * other at once cannot both succeed, through one server or two nodes of a cluster.
 */
export async function updateUser(targetId: number, patch: { role?: Role, active?: boolean, name?: string }, actor: User): Promise<User> {
  return await inTransaction(async (transaction) => {
    const admins = await User.findAll({ where: { role: 'admin', active: true }, transaction, lock: transaction.LOCK.UPDATE })
    const user = await User.findByPk(targetId, { transaction, lock: transaction.LOCK.UPDATE })
    if (!user) throw notFound('user')
    const before = { role: user.role, active: user.active, name: user.name }
    const losesAdmin = user.role === 'admin' && user.active && ((patch.role && patch.role !== 'admin') || patch.active === false)
    if (losesAdmin && admins.filter(a => a.id !== user.id).length === 0) {
      throw conflict(
        'Benchlore needs at least one active admin: make someone else admin first.',
        { fields: { [patch.role ? 'role' : 'active']: 'this is the last active admin' } },
      )
    }
    if (losesAdmin) await writeRuleGuard('active-admins', transaction)
    const endsSessions = (patch.role !== undefined && patch.role !== user.role) || (patch.active !== undefined && patch.active !== user.active)
    if (endsSessions) await revokeOpenInvitations(user.id, transaction)
    await user.update({
      ...patch,
      sessionVersion: endsSessions ? user.sessionVersion + 1 : user.sessionVersion,
    }, { transaction })
    await recordAudit({ actorId: actor.id, action: 'user.updated', entityType: 'user', entityId: user.id, before, after: { role: user.role, active: user.active, name: user.name } }, transaction)
    return user
  })
}
