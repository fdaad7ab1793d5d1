import { createHash, randomBytes } from 'node:crypto'
import type { InvitationStatus } from '../../../shared/types/auth'
import type { Role } from '../../../shared/types/roles'
import { Invitation, User, inTransaction } from '../../db'
import { recordAudit } from '../audit/audit-log'
import { DomainError, conflict, gone } from '../errors'
import { queueMail } from '../mail/outbox'

export const INVITE_TTL_MS = 72 * 60 * 60_000

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
      throw conflict(`${input.email} already has a Benchlore account.`, { fields: { email: 'already has an account' } })
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
    if (!invitation) throw new DomainError('not_found', 'This invitation link is not known. Ask an admin for a new one.')
    if (invitation.acceptedAt) throw gone('This invitation link has already been used. Sign in, or ask an admin for a new link.')
    if (invitation.expiresAt.getTime() <= Date.now()) throw gone('This invitation link has expired. Ask an admin for a new one.')
    const user = await User.findByPk(invitation.userId, { transaction, lock: transaction.LOCK.UPDATE })
    if (!user) throw new DomainError('not_found', 'This invitation link is not known.')
    await user.update({ name: input.name, passwordHash, role: invitation.role, active: true, lastLoginAt: new Date(), sessionVersion: user.sessionVersion + 1 }, { transaction })
    await invitation.update({ acceptedAt: new Date() }, { transaction })
    await recordAudit({ actorId: user.id, action: 'user.invitation_accepted', entityType: 'user', entityId: user.id }, transaction)
    return user
  })
}
