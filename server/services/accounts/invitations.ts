import { createHash, randomBytes } from 'node:crypto'
import { Op, type Transaction } from 'sequelize'
import type { InvitationStatus } from '../../../shared/types/auth'
import { ROLE_LABELS } from '../../../shared/types/roles'
import { Invitation, User, inTransaction } from '../../db'
import { recordAudit } from '../audit/audit-log'
import { DomainError, conflict, gone, notFound } from '../errors'
import { queueMail } from '../mail/outbox'

export const INVITE_TTL_MS = 72 * 60 * 60_000

const tokenHash = (token: string) => createHash('sha256').update(token).digest('hex')

/** The invitations of these users that can still be accepted. */
const waiting = (userId: number | number[]) => ({ userId, acceptedAt: null, revokedAt: null, expiresAt: { [Op.gt]: new Date() } })

const DAY = new Intl.DateTimeFormat('en-GB', { day: 'numeric', month: 'short', year: 'numeric', timeZone: 'UTC' })

const escapeHtml = (s: string) => s.replace(/[&<>"']/g, c => `&#${c.charCodeAt(0)};`)

/**
 * Withdraws whatever invitation of this user is still open. Called when an admin withdraws it,
 * sends a new link, or changes the invitee's role or deactivates them: a link must never undo
 * a decision taken after it was sent. Answers how many were withdrawn.
 */
export async function revokeOpenInvitations(userId: number, transaction: Transaction): Promise<number> {
  const [n] = await Invitation.update({ revokedAt: new Date() }, { where: waiting(userId), transaction })
  return n
}

/** A fresh one-time link for this user, with its mail queued in the same transaction. */
async function issueInvitation(user: User, actor: User, appOrigin: string, transaction: Transaction): Promise<Date> {
  const token = randomBytes(32).toString('base64url')
  const expiresAt = new Date(Date.now() + INVITE_TTL_MS)
  await Invitation.create({ userId: user.id, role: user.role, tokenHash: tokenHash(token), invitedById: actor.id, expiresAt, acceptedAt: null }, { transaction })
  const link = `${appOrigin.replace(/\/$/, '')}/invite/${token}`
  const role = ROLE_LABELS[user.role].toLowerCase()
  const expiry = `the link works once and expires ${expiresAt.toUTCString()}`
  await queueMail({
    kind: 'invitation',
    to: user.email,
    subject: `${actor.name} invited you to Benchlore`,
    text: [
      `Hello,`,
      ``,
      `${actor.name} invited you to Benchlore, the Harbour Lane bench's shared diagnostic procedures, as ${role}.`,
      ``,
      `Set your name and password here (${expiry}):`,
      link,
      ``,
      `If you were not expecting this, ignore this message.`,
    ].join('\n'),
    html: [
      `<p>Hello,</p>`,
      `<p>${escapeHtml(actor.name)} invited you to Benchlore, the Harbour Lane bench's shared diagnostic procedures, as ${role}.</p>`,
      `<p><a href="${escapeHtml(link)}">Set your name and password</a> (${expiry}).</p>`,
      `<p>If the link does not open, copy this address into your browser:<br>${escapeHtml(link)}</p>`,
      `<p>If you were not expecting this, ignore this message.</p>`,
    ].join('\n'),
  }, transaction)
  return expiresAt
}

/**
 * Invites someone by e-mail: a user row without a password and a one-time link valid 72 h, the
 * mail queued in the same transaction. An address whose invitation is still open is not invited
 * twice: the answer says so, and the admin chooses to send a new link or withdraw it.
 */
export async function inviteUser(input: { email: string, role: User['role'], name?: string }, actor: User, appOrigin: string): Promise<{ user: User, expiresAt: Date }> {
  return await inTransaction(async (transaction) => {
    let user = await User.findOne({ where: { email: input.email }, transaction, lock: transaction.LOCK.UPDATE })
    if (user?.passwordHash) {
      throw conflict(`${input.email} already has a Benchlore account.`, { fields: { email: 'already has an account' } })
    }
    const open = user ? await Invitation.findOne({ where: waiting(user.id), order: [['id', 'DESC']], transaction }) : null
    if (user && open) {
      throw conflict(
        `${input.email} was invited on ${DAY.format(open.createdAt)} and has not joined yet: send a new link, or withdraw the invitation.`,
        { fields: { email: 'already invited' }, invited: { userId: user.id, sentAt: open.createdAt.toISOString(), expiresAt: open.expiresAt.toISOString() } },
      )
    }
    // Inviting again after a link expired or was withdrawn is a new decision: role, name and
    // activation are the ones given now.
    if (user) await user.update({ role: input.role, name: input.name || user.name, active: true }, { transaction })
    else user = await User.create({ email: input.email, name: input.name || input.email.split('@')[0]!, role: input.role, passwordHash: null, lastLoginAt: null }, { transaction })
    const expiresAt = await issueInvitation(user, actor, appOrigin, transaction)
    await recordAudit({ actorId: actor.id, action: 'user.invited', entityType: 'user', entityId: user.id, after: { email: input.email, role: input.role } }, transaction)
    return { user, expiresAt }
  })
}

/** The invitee a link is about to be sent again to, or withdrawn from: someone who has not joined. */
async function invitee(userId: number, transaction: Transaction): Promise<User> {
  const user = await User.findByPk(userId, { transaction, lock: transaction.LOCK.UPDATE })
  if (!user) throw notFound('user')
  if (user.passwordHash) throw conflict(`${user.name} has already joined; there is no invitation to change.`)
  return user
}

/** Sends a new link with the invitee's present role; the earlier link stops working. */
export async function resendInvitation(userId: number, actor: User, appOrigin: string): Promise<{ user: User, expiresAt: Date, replaced: number }> {
  return await inTransaction(async (transaction) => {
    const user = await invitee(userId, transaction)
    if (!user.active) throw conflict(`${user.name} is deactivated: reactivate the account before sending a new link.`)
    const replaced = await revokeOpenInvitations(user.id, transaction)
    const expiresAt = await issueInvitation(user, actor, appOrigin, transaction)
    await recordAudit({ actorId: actor.id, action: 'user.invitation_resent', entityType: 'user', entityId: user.id, after: { role: user.role } }, transaction)
    return { user, expiresAt, replaced }
  })
}

/** Withdraws the open invitation: its link stops working; the person can be invited again later. */
export async function withdrawInvitation(userId: number, actor: User): Promise<User> {
  return await inTransaction(async (transaction) => {
    const user = await invitee(userId, transaction)
    if (!(await revokeOpenInvitations(user.id, transaction))) throw conflict(`${user.name} has no invitation waiting.`)
    await recordAudit({ actorId: actor.id, action: 'user.invitation_withdrawn', entityType: 'user', entityId: user.id }, transaction)
    return user
  })
}

/** The latest invitation of each of these users (for the admin's list). */
export async function latestInvitations(userIds: number[]): Promise<Map<number, Invitation>> {
  if (!userIds.length) return new Map()
  const rows = await Invitation.findAll({ where: { userId: userIds }, order: [['id', 'ASC']] })
  return new Map(rows.map(r => [r.userId, r]))
}

function statusOf(invitation: Invitation, user: User): Exclude<InvitationStatus, 'unknown'> {
  if (invitation.acceptedAt) return 'used'
  if (invitation.revokedAt || !user.active) return 'withdrawn'
  if (invitation.expiresAt.getTime() <= Date.now()) return 'expired'
  return 'valid'
}

export async function findInvitation(token: string): Promise<{ status: InvitationStatus, invitation?: Invitation, user?: User }> {
  const invitation = await Invitation.findOne({ where: { tokenHash: tokenHash(token) } })
  if (!invitation) return { status: 'unknown' }
  const user = await User.findByPk(invitation.userId)
  if (!user) return { status: 'unknown' }
  return { status: statusOf(invitation, user), invitation, user }
}

const REFUSALS: Record<Exclude<InvitationStatus, 'valid' | 'unknown'>, string> = {
  used: 'This invitation link has already been used. Sign in, or ask an admin for a new link.',
  expired: 'This invitation link has expired. Ask an admin for a new one.',
  withdrawn: 'This invitation was withdrawn. Ask an admin if you still need an account.',
}

/**
 * Sets the invitee's name and password and signs them in. The account keeps the role and state
 * the admin last gave it: accepting never changes either.
 */
export async function acceptInvitation(input: { token: string, name: string, password: string }, hashPassword: (p: string) => Promise<string>): Promise<User> {
  const passwordHash = await hashPassword(input.password)
  return await inTransaction(async (transaction) => {
    const invitation = await Invitation.findOne({ where: { tokenHash: tokenHash(input.token) }, transaction, lock: transaction.LOCK.UPDATE })
    if (!invitation) throw new DomainError('not_found', 'This invitation link is not known. Ask an admin for a new one.')
    const user = await User.findByPk(invitation.userId, { transaction, lock: transaction.LOCK.UPDATE })
    if (!user) throw new DomainError('not_found', 'This invitation link is not known.')
    const status = statusOf(invitation, user)
    if (status !== 'valid') throw gone(REFUSALS[status])
    await user.update({ name: input.name, passwordHash, lastLoginAt: new Date(), sessionVersion: user.sessionVersion + 1 }, { transaction })
    await invitation.update({ acceptedAt: new Date() }, { transaction })
    await recordAudit({ actorId: user.id, action: 'user.invitation_accepted', entityType: 'user', entityId: user.id }, transaction)
    return user
  })
}
