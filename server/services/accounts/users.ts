import { Op } from 'sequelize'
import type { AdminUserDto, UserDto } from '../../../shared/types/auth'
import type { Role } from '../../../shared/types/roles'
import { Invitation, User, inTransaction } from '../../db'
import { recordAudit } from '../audit/audit-log'
import { conflict, notFound } from '../errors'

export function toUserDto(u: User): UserDto {
  return { id: u.id, email: u.email, name: u.name, role: u.role }
}

export function toAdminUserDto(u: User, pendingInvite: boolean): AdminUserDto {
  return {
    ...toUserDto(u),
    active: u.active,
    lastLoginAt: u.lastLoginAt?.toISOString() ?? null,
    createdAt: u.createdAt.toISOString(),
    invitationPending: pendingInvite,
  }
}

export async function listUsers(): Promise<AdminUserDto[]> {
  const [users, pending] = await Promise.all([
    User.findAll({ order: [['active', 'DESC'], ['role', 'DESC'], ['name', 'ASC']] }),
    Invitation.findAll({ where: { acceptedAt: null, expiresAt: { [Op.gt]: new Date() } }, attributes: ['userId'], raw: true }),
  ])
  const pendingIds = new Set(pending.map(p => p.userId))
  return users.map(u => toAdminUserDto(u, pendingIds.has(u.id) && !u.passwordHash))
}

/**
 * Role and activation changes by an admin. Both end the user's sessions. The last active admin
 * can be neither demoted nor deactivated: the check runs under row locks so two admins demoting
 * each other at once cannot both succeed.
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
    const endsSessions = (patch.role !== undefined && patch.role !== user.role) || (patch.active !== undefined && patch.active !== user.active)
    await user.update({
      ...patch,
      sessionVersion: endsSessions ? user.sessionVersion + 1 : user.sessionVersion,
    }, { transaction })
    await recordAudit({ actorId: actor.id, action: 'user.updated', entityType: 'user', entityId: user.id, before, after: { role: user.role, active: user.active, name: user.name } }, transaction)
    return user
  })
}
