import { createHash, randomBytes } from 'node:crypto'
import { createError } from 'h3'
import { Op } from 'sequelize'
import type { AdminUserDto, UserDto } from '../../shared/types/auth'
import type { Role } from '../../shared/types/roles'
import { Invitation, LoginFailure, User, inTransaction } from '../db'
import { recordAudit } from './audit'
import { queueMail } from './mail'

/** Failed sign-ins allowed per window before 429, per account and per client address. */
export const THROTTLE = { windowMs: 15 * 60_000, perAccount: 10, perIp: 30 }
export const INVITE_TTL_MS = 72 * 60 * 60_000

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

export async function assertNotThrottled(email: string, ip: string): Promise<void> {
  const since = new Date(Date.now() - THROTTLE.windowMs)
  const [byAccount, byIp] = await Promise.all([
    LoginFailure.count({ where: { email, createdAt: { [Op.gte]: since } } }),
    LoginFailure.count({ where: { ip, createdAt: { [Op.gte]: since } } }),
  ])
  if (byAccount >= THROTTLE.perAccount || byIp >= THROTTLE.perIp) {
    throw createError({
      statusCode: 429,
      message: 'Too many failed sign-ins. Wait 15 minutes and try again, or ask an admin to check the account.',
      data: { retryAfterSeconds: THROTTLE.windowMs / 1000 },
    })
  }
}

export interface PasswordCheck {
  verify: (hash: string, plain: string) => Promise<boolean>
}

// Checked when the e-mail is unknown, so that answer takes as long as a wrong password.
let decoyHash: string | undefined

/**
 * Checks e-mail and password. Unknown e-mail, wrong password and a deactivated account all give
 * the same 401, so the answer does not tell which accounts exist.
 */
export async function authenticate(email: string, password: string, ip: string, hasher: PasswordCheck & { hash: (p: string) => Promise<string> }): Promise<User> {
  await assertNotThrottled(email, ip)
  const user = await User.findOne({ where: { email } })
  let ok = false
  if (user?.passwordHash && user.active) {
    ok = await hasher.verify(user.passwordHash, password)
  }
  else {
    decoyHash ??= await hasher.hash(randomBytes(16).toString('hex'))
    await hasher.verify(decoyHash, password)
  }
  if (!ok || !user) {
    await LoginFailure.create({ email, ip })
    throw createError({ statusCode: 401, message: 'E-mail or password is not right.' })
  }
  await LoginFailure.destroy({ where: { email } })
  await user.update({ lastLoginAt: new Date() })
  return user
}

/** Ends every session of the user at their next request (sealed cookies cannot be revoked). */
export async function endAllSessions(userId: number): Promise<void> {
  await User.increment('sessionVersion', { where: { id: userId } })
}

export async function listUsers(): Promise<AdminUserDto[]> {
  const [users, pending] = await Promise.all([
    User.findAll({ order: [['active', 'DESC'], ['role', 'DESC'], ['name', 'ASC']] }),
    Invitation.findAll({ where: { acceptedAt: null, expiresAt: { [Op.gt]: new Date() } }, attributes: ['userId'], raw: true }),
  ])
  const pendingIds = new Set(pending.map(p => p.userId))
  return users.map(u => toAdminUserDto(u, pendingIds.has(u.id) && !u.passwordHash))
}

const tokenHash = (token: string) => createHash('sha256').update(token).digest('hex')

/**
 * Invites someone by e-mail: a user row without a password and a one-time link valid 72 h, the
 * mail queued in the same transaction. Inviting a pending address again replaces its link.
 */
export async function inviteUser(input: { email: string, role: Role, name?: string }, actor: User, appOrigin: string): Promise<{ user: User, expiresAt: Date }> {
  const token = randomBytes(32).toString('base64url')
  const expiresAt = new Date(Date.now() + INVITE_TTL_MS)
  const user = await inTransaction(async (transaction) => {
    let user = await User.findOne({ where: { email: input.email }, transaction, lock: transaction.LOCK.UPDATE })
    if (user?.passwordHash) {
      throw createError({ statusCode: 409, message: `${input.email} already has a Benchlore account.`, data: { fields: { email: 'already has an account' } } })
    }
    if (user) await user.update({ role: input.role, name: input.name || user.name }, { transaction })
    else user = await User.create({ email: input.email, name: input.name || input.email.split('@')[0]!, role: input.role, passwordHash: null, lastLoginAt: null }, { transaction })
    await Invitation.update({ expiresAt: new Date() }, { where: { userId: user.id, acceptedAt: null }, transaction })
    await Invitation.create({ userId: user.id, role: input.role, tokenHash: tokenHash(token), invitedById: actor.id, expiresAt, acceptedAt: null }, { transaction })
    await queueMail({
      kind: 'invitation',
      to: input.email,
      subject: `${actor.name} invited you to Benchlore`,
      text: [
        `Hello,`,
        ``,
        `${actor.name} invited you to Benchlore, the Harbour Lane bench's shared diagnostic procedures, as ${input.role}.`,
        ``,
        `Set your name and password here (the link works once and expires ${expiresAt.toUTCString()}):`,
        `${appOrigin.replace(/\/$/, '')}/invite/${token}`,
        ``,
        `If you were not expecting this, ignore this message.`,
      ].join('\n'),
    }, transaction)
    await recordAudit({ actorId: actor.id, action: 'user.invited', entityType: 'user', entityId: user.id, after: { email: input.email, role: input.role } }, transaction)
    return user
  })
  return { user, expiresAt }
}

export type InvitationStatus = 'valid' | 'used' | 'expired' | 'unknown'

export async function findInvitation(token: string): Promise<{ status: InvitationStatus, invitation?: Invitation, user?: User }> {
  const invitation = await Invitation.findOne({ where: { tokenHash: tokenHash(token) } })
  if (!invitation) return { status: 'unknown' }
  const user = await User.findByPk(invitation.userId)
  if (!user) return { status: 'unknown' }
  if (invitation.acceptedAt) return { status: 'used', invitation, user }
  if (invitation.expiresAt.getTime() <= Date.now()) return { status: 'expired', invitation, user }
  return { status: 'valid', invitation, user }
}

export async function acceptInvitation(input: { token: string, name: string, password: string }, hashPassword: (p: string) => Promise<string>): Promise<User> {
  const passwordHash = await hashPassword(input.password)
  return await inTransaction(async (transaction) => {
    const invitation = await Invitation.findOne({ where: { tokenHash: tokenHash(input.token) }, transaction, lock: transaction.LOCK.UPDATE })
    if (!invitation) throw createError({ statusCode: 404, message: 'This invitation link is not known. Ask an admin for a new one.' })
    if (invitation.acceptedAt) throw createError({ statusCode: 410, message: 'This invitation link has already been used. Sign in, or ask an admin for a new link.' })
    if (invitation.expiresAt.getTime() <= Date.now()) throw createError({ statusCode: 410, message: 'This invitation link has expired. Ask an admin for a new one.' })
    const user = await User.findByPk(invitation.userId, { transaction, lock: transaction.LOCK.UPDATE })
    if (!user) throw createError({ statusCode: 404, message: 'This invitation link is not known.' })
    await user.update({ name: input.name, passwordHash, role: invitation.role, active: true, lastLoginAt: new Date(), sessionVersion: user.sessionVersion + 1 }, { transaction })
    await invitation.update({ acceptedAt: new Date() }, { transaction })
    await recordAudit({ actorId: user.id, action: 'user.invitation_accepted', entityType: 'user', entityId: user.id }, transaction)
    return user
  })
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
    if (!user) throw createError({ statusCode: 404, message: 'No such user.' })
    const before = { role: user.role, active: user.active, name: user.name }
    const losesAdmin = user.role === 'admin' && user.active && ((patch.role && patch.role !== 'admin') || patch.active === false)
    if (losesAdmin && admins.filter(a => a.id !== user.id).length === 0) {
      throw createError({
        statusCode: 409,
        message: 'Benchlore needs at least one active admin: make someone else admin first.',
        data: { fields: { [patch.role ? 'role' : 'active']: 'this is the last active admin' } },
      })
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
