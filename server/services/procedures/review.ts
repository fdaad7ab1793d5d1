import type { RevisionState } from '../../../shared/types/procedure'
import type { RevisionSummaryDto } from '../../../shared/types/procedure-api'
import { roleAtLeast } from '../../../shared/types/roles'
import { Procedure, ReviewComment, Revision, Symptom, User, inTransaction } from '../../db'
import { recordAudit } from '../audit/audit-log'
import { notifyProcedureChanged } from '../change-log/notify'
import { conflict, forbidden, notFound } from '../errors'
import { queueMail } from '../mail/outbox'
import { loadRevision, wrongState } from './access'
import { revisionSummaries } from './dto'

// Review: the queue of submitted revisions, an editor's decision on one (four eyes: never one's
// own), and retiring a procedure.

/** Revisions awaiting review, oldest first. */
export async function reviewQueue(user: User): Promise<RevisionSummaryDto[]> {
  if (!roleAtLeast(user.role, 'editor')) throw forbidden('The review queue is for editors.')
  return await revisionSummaries({ state: 'in_review' }, [['submittedAt', 'ASC'], ['id', 'ASC']])
}

export type Decision = 'approve' | 'request_changes' | 'reject'
const DECISION_STATE: Record<Decision, RevisionState> = { approve: 'published', request_changes: 'changes_requested', reject: 'rejected' }

/**
 * An editor's decision on a revision awaiting review: approving publishes it and supersedes the
 * live one in the same transaction (with a change-log row for search); the author, if still
 * active, is mailed through the outbox.
 */
export async function decideRevision(id: number, decision: Decision, comment: string | undefined, actor: User, appOrigin: string) {
  return await inTransaction(async (transaction) => {
    const { rev } = await loadRevision(id, transaction, false)
    const proc = await Procedure.findByPk(rev.procedureId, { transaction, lock: transaction.LOCK.UPDATE })
    await rev.reload({ transaction, lock: transaction.LOCK.UPDATE })
    if (rev.authorId === actor.id) throw forbidden('Four eyes: another editor must review your own revision.')
    if (rev.state !== 'in_review') throw wrongState(rev, 'awaiting review')
    if (decision === 'approve') {
      const proposed = await Symptom.findAll({ where: { slug: rev.content.symptoms, status: 'proposed' }, transaction })
      if (proposed.length) throw conflict(`Accept or merge the proposed symptom${proposed.length > 1 ? 's' : ''} ${proposed.map(s => `"${s.name}"`).join(', ')} before publishing.`)
      if (proc!.status === 'retired') throw conflict('This procedure is retired; it cannot be published again.')
    }
    const now = new Date()
    const state = DECISION_STATE[decision]
    if (decision === 'approve') {
      if (proc!.publishedRevisionId) await Revision.update({ state: 'superseded' }, { where: { id: proc!.publishedRevisionId }, transaction })
      await proc!.update({ publishedRevisionId: rev.id }, { transaction })
      await notifyProcedureChanged(proc!.id, transaction)
    }
    await rev.update({ state, reviewerId: actor.id, decidedAt: now, publishedAt: decision === 'approve' ? now : null }, { transaction })
    if (comment) await ReviewComment.create({ revisionId: rev.id, authorId: actor.id, body: comment, stepKey: null }, { transaction })
    await recordAudit({ actorId: actor.id, action: `revision.${decision}`, entityType: 'revision', entityId: rev.id, before: { state: 'in_review', published: proc!.publishedRevisionId }, after: { state, comment: comment ?? null } }, transaction)
    const author = await User.findByPk(rev.authorId, { transaction })
    if (author?.active) {
      const words = { approve: 'approved and published', request_changes: 'sent back with requested changes', reject: 'declined' }[decision]
      await queueMail({
        kind: `revision_${decision}`,
        to: author.email,
        subject: `Revision ${rev.number} of "${rev.content.title}" was ${words}`,
        text: `${actor.name} ${words} revision ${rev.number} of "${rev.content.title}".\n\n${comment ? `Comment: ${comment}\n\n` : ''}${appOrigin.replace(/\/$/, '')}/revisions/${rev.id}\n`,
      }, transaction)
    }
    return rev
  })
}

export async function retireProcedure(slug: string, reason: string, actor: User) {
  return await inTransaction(async (transaction) => {
    const proc = await Procedure.findOne({ where: { slug }, transaction, lock: transaction.LOCK.UPDATE })
    if (!proc) throw notFound('procedure')
    if (proc.status === 'retired') throw conflict('This procedure is already retired.', { status: proc.status })
    await proc.update({ status: 'retired', retiredAt: new Date() }, { transaction })
    await notifyProcedureChanged(proc.id, transaction)
    await recordAudit({ actorId: actor.id, action: 'procedure.retired', entityType: 'procedure', entityId: proc.id, before: { status: 'active' }, after: { status: 'retired', reason } }, transaction)
    return proc
  })
}
