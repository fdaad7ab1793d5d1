import { Op, type Transaction } from 'sequelize'
import { roleAtLeast } from '../../../shared/types/roles'
import type { RevisionState } from '../../../shared/types/procedure'
import { Procedure, Revision, type User } from '../../db'
import { conflict, notFound } from '../errors'

// Who may see what. Drafts: their author and editors. Submitted revisions: authors and up.
// Technicians: only the live (published) revision of an active procedure. Anything else answers
// 404, so a technician cannot even learn that a draft exists.

export function canSeeRevision(user: User, rev: Revision, proc: Procedure): boolean {
  if (rev.state === 'draft') return rev.authorId === user.id || roleAtLeast(user.role, 'editor')
  if (roleAtLeast(user.role, 'author')) return true
  return rev.state === 'published' && proc.status === 'active' && proc.publishedRevisionId === rev.id
}

/** A revision in another state than the action needs: 409 naming both. */
export const wrongState = (rev: Revision, wanted: string) => conflict(
  `This revision is ${STATE_WORDS[rev.state as RevisionState]} (${rev.state}); it must be ${wanted} for that.`,
  { state: rev.state },
)
const STATE_WORDS: Record<RevisionState, string> = {
  draft: 'a draft',
  in_review: 'awaiting review',
  published: 'live',
  superseded: 'an earlier revision',
  changes_requested: 'sent back to its author',
  rejected: 'declined',
}

export async function loadRevision(id: number, transaction?: Transaction, lock = false): Promise<{ rev: Revision, proc: Procedure }> {
  const rev = await Revision.findByPk(id, { transaction, lock: lock && transaction ? transaction.LOCK.UPDATE : undefined })
  if (!rev) throw notFound('revision')
  const proc = await Procedure.findByPk(rev.procedureId, { transaction, lock: lock && transaction ? transaction.LOCK.UPDATE : undefined })
  if (!proc) throw notFound('revision')
  return { rev, proc }
}

export async function loadVisibleRevision(id: number, user: User): Promise<{ rev: Revision, proc: Procedure }> {
  const found = await loadRevision(id)
  if (!canSeeRevision(user, found.rev, found.proc)) throw notFound('revision')
  return found
}

/**
 * A procedure this person may know of: one of its revisions is visible to them. Anything else
 * answers 404 exactly like a slug nobody used, so routes keyed by slug are no existence oracle.
 */
export async function findVisibleProcedure(slug: string, user: User): Promise<Procedure> {
  const proc = await Procedure.findOne({ where: { slug } })
  if (!proc) throw notFound('procedure')
  if (roleAtLeast(user.role, 'editor')) return proc
  if (!roleAtLeast(user.role, 'author')) {
    if (proc.status === 'active' && proc.publishedRevisionId) return proc
    throw notFound('procedure')
  }
  const seen = await Revision.count({ where: { procedureId: proc.id, [Op.or]: [{ state: { [Op.ne]: 'draft' } }, { authorId: user.id }] } })
  if (!seen) throw notFound('procedure')
  return proc
}

export async function findProcedure(slug: string): Promise<Procedure> {
  const proc = await Procedure.findOne({ where: { slug } })
  if (!proc) throw notFound('procedure')
  return proc
}
