import { roleAtLeast } from '../../../shared/types/roles'
import type { ReviewCommentDto } from '../../../shared/types/procedure-api'
import { ReviewComment, type User } from '../../db'
import { forbidden, invalid, notFound } from '../errors'
import { loadVisibleRevision, wrongState } from './access'
import { people, toCommentDto } from './dto'

// Review comments: on a whole revision or one step, while it is in review or sent back; the
// author and editors write and resolve them.

export async function addComment(revisionId: number, input: { body: string, stepKey?: string }, actor: User): Promise<ReviewCommentDto> {
  const { rev } = await loadVisibleRevision(revisionId, actor)
  if (!(rev.authorId === actor.id || roleAtLeast(actor.role, 'editor'))) throw forbidden('Review comments are for editors and the revision\'s author.')
  if (rev.state !== 'in_review' && rev.state !== 'changes_requested') throw wrongState(rev, 'awaiting review or sent back')
  if (input.stepKey && !rev.content.steps.some(s => s.key === input.stepKey)) {
    throw invalid(`This revision has no step "${input.stepKey}".`, { stepKey: 'no such step' })
  }
  const comment = await ReviewComment.create({ revisionId: rev.id, authorId: actor.id, body: input.body, stepKey: input.stepKey ?? null })
  return toCommentDto(comment, await people([actor.id]))
}

export async function resolveComment(commentId: number, resolved: boolean, actor: User): Promise<ReviewCommentDto> {
  const comment = await ReviewComment.findByPk(commentId)
  if (!comment) throw notFound('comment')
  const { rev } = await loadVisibleRevision(comment.revisionId, actor)
  if (!(rev.authorId === actor.id || roleAtLeast(actor.role, 'editor'))) throw forbidden('Only editors and the revision\'s author resolve comments.')
  await comment.update({ resolved })
  return toCommentDto(comment, await people([comment.authorId]))
}
