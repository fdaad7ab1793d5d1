import { Op, UniqueConstraintError, type Transaction } from 'sequelize'
import { roleAtLeast } from '../../../shared/types/roles'
import { RevisionContent, type DraftContent, type RevisionState } from '../../../shared/types/procedure'
import type { RevisionComparisonDto, RevisionDetailDto, RevisionSummaryDto } from '../../../shared/types/procedure-api'
import { compareContents } from '../../../shared/utils/compare'
import { slugify } from '../../../shared/utils/slug'
import { describeZodError } from '../../../shared/utils/validation'
import { DeviceType, Procedure, Revision, Symptom, User, inTransaction } from '../../db'
import { recordAudit } from '../audit/audit-log'
import { DomainError, conflict, forbidden, invalid, notFound } from '../errors'
import { queueMail } from '../mail/outbox'
import { canSeeRevision, findProcedure, loadRevision, loadVisibleRevision, wrongState } from './access'
import { people, revisionDetail, revisionSummaries, summary } from './dto'

// Revisions from a procedure's first draft to its submission: drafts (one open draft per author
// and procedure, saved with a version counter), submission with gapless numbers, and the lists
// and comparisons an author reads.

export async function listRevisionsOf(slug: string, user: User): Promise<RevisionSummaryDto[]> {
  const proc = await findProcedure(slug)
  const rows = (await Revision.findAll({ where: { procedureId: proc.id }, order: [['id', 'DESC']] })).filter(r => canSeeRevision(user, r, proc))
  if (!rows.length) throw notFound('procedure')
  const who = await people(rows.flatMap(r => [r.authorId, r.reviewerId]))
  return rows.map(r => summary(r, proc, who))
}

/** The caller's own revisions, newest first (the review queue is in review.ts). */
export async function listOwnRevisions(user: User, state?: RevisionState): Promise<RevisionSummaryDto[]> {
  return await revisionSummaries({ authorId: user.id, ...(state ? { state } : {}) }, [['updatedAt', 'DESC'], ['id', 'DESC']])
}

async function freeProcedureSlug(title: string, transaction: Transaction): Promise<string> {
  const base = slugify(title, 90)
  const taken = new Set((await Procedure.findAll({ where: { slug: { [Op.like]: `${base}%` } }, attributes: ['slug'], raw: true, transaction })).map(p => p.slug))
  if (!taken.has(base)) return base
  for (let i = 2; ; i++) if (!taken.has(`${base}-${i}`)) return `${base}-${i}`
}

export async function createProcedure(content: DraftContent, changeNote: string | undefined, actor: User) {
  return await inTransaction(async (transaction) => {
    const proc = await Procedure.create({ slug: await freeProcedureSlug(content.title, transaction), createdById: actor.id, publishedRevisionId: null, retiredAt: null }, { transaction })
    const rev = await Revision.create({ procedureId: proc.id, number: null, authorId: actor.id, content: content as RevisionContent, changeNote: changeNote ?? 'First version', baseRevisionId: null, reviewerId: null, submittedAt: null, decidedAt: null, publishedAt: null }, { transaction })
    await recordAudit({ actorId: actor.id, action: 'procedure.created', entityType: 'procedure', entityId: proc.id, after: { slug: proc.slug, revisionId: rev.id } }, transaction)
    return { proc, rev }
  })
}

const alreadyDrafting = (revisionId?: number) => conflict('You already have a draft of this procedure.', { revisionId })

/**
 * A new draft for the caller: from the live revision, or from a revision that was sent back to
 * them. One open draft per author and procedure: checked under the procedure's row lock, and
 * held by a unique index (revisions_one_open_draft), which also refuses the second of two drafts
 * started at once through different nodes of a cluster, where the row lock binds one node only.
 */
export async function startDraft(slug: string, actor: User, fromId?: number) {
  try {
    return await createDraft(slug, actor, fromId)
  }
  catch (error) {
    if (!(error instanceof UniqueConstraintError && /revisions_one_open_draft/.test(String(error.original?.message)))) throw error
    const open = await Revision.findOne({ where: { authorId: actor.id, state: 'draft' }, include: [{ model: Procedure, as: 'procedure', where: { slug }, attributes: [] }], attributes: ['id'] })
    throw alreadyDrafting(open?.id)
  }
}

async function createDraft(slug: string, actor: User, fromId?: number) {
  return await inTransaction(async (transaction) => {
    const proc = await Procedure.findOne({ where: { slug }, transaction, lock: transaction.LOCK.UPDATE })
    if (!proc) throw notFound('procedure')
    if (proc.status === 'retired') throw conflict('This procedure is retired; it takes no new revisions.')
    const open = await Revision.findOne({ where: { procedureId: proc.id, authorId: actor.id, state: 'draft' }, transaction })
    if (open) throw alreadyDrafting(open.id)
    const base = fromId ? await Revision.findByPk(fromId, { transaction }) : proc.publishedRevisionId ? await Revision.findByPk(proc.publishedRevisionId, { transaction }) : null
    if (!base || base.procedureId !== proc.id) throw new DomainError('not_found', fromId ? 'No such revision of this procedure.' : 'This procedure has no live revision to start from.')
    if (fromId && !(base.state === 'changes_requested' && base.authorId === actor.id) && base.state !== 'published') {
      throw conflict('A new draft starts from the live revision or from one that was sent back to you.', { state: base.state })
    }
    const rev = await Revision.create({ procedureId: proc.id, number: null, authorId: actor.id, content: base.content, changeNote: '', baseRevisionId: base.id, reviewerId: null, submittedAt: null, decidedAt: null, publishedAt: null }, { transaction })
    await recordAudit({ actorId: actor.id, action: 'revision.draft_started', entityType: 'revision', entityId: rev.id, after: { procedure: proc.slug, base: base.id } }, transaction)
    return rev
  })
}

/**
 * Saves a draft. `version` is the one the editor based its changes on: a stale one (saved from
 * another tab meanwhile) is refused with the current draft in the answer, so nothing is lost.
 */
export async function saveDraft(id: number, input: { version: number, content: DraftContent, changeNote?: string }, actor: User) {
  const result = await inTransaction(async (transaction) => {
    const { rev, proc } = await loadRevision(id, transaction, true)
    if (!canSeeRevision(actor, rev, proc)) throw notFound('revision')
    if (rev.authorId !== actor.id) throw forbidden('Only the author of a draft can change it.')
    if (rev.state !== 'draft') throw wrongState(rev, 'a draft')
    if (rev.version !== input.version) return { stale: true as const, rev, proc }
    await rev.update({ content: input.content as RevisionContent, changeNote: input.changeNote ?? rev.changeNote, version: rev.version + 1 }, { transaction })
    return { stale: false as const, rev, proc }
  })
  if (result.stale) {
    throw conflict(
      `This draft was saved elsewhere meanwhile (version ${result.rev.version}, yours was based on ${input.version}). Both versions are kept: choose which to continue from.`,
      { current: await revisionDetail(result.rev, result.proc, actor) },
    )
  }
  return result.rev
}

async function editorsExcept(authorId: number, transaction: Transaction) {
  return await User.findAll({ where: { role: ['editor', 'admin'], active: true, id: { [Op.ne]: authorId } }, transaction })
}

/**
 * Sends a draft to review. Its number is the procedure's `lastNumber + 1`, taken under the
 * procedure's row lock, so numbers are gapless and unique however many submit at once.
 */
export async function submitRevision(id: number, actor: User, appOrigin: string) {
  return await inTransaction(async (transaction) => {
    const { rev } = await loadRevision(id, transaction, false)
    if (rev.authorId !== actor.id) {
      if (rev.state === 'draft' && !roleAtLeast(actor.role, 'editor')) throw notFound('revision')
      throw forbidden('Only the author can submit a draft.')
    }
    // The procedure row is the lock that serialises submissions: numbers are gapless and unique.
    const proc = await Procedure.findByPk(rev.procedureId, { transaction, lock: transaction.LOCK.UPDATE })
    await rev.reload({ transaction, lock: transaction.LOCK.UPDATE })
    if (rev.state !== 'draft') throw wrongState(rev, 'a draft')
    const parsed = RevisionContent.safeParse(rev.content)
    if (!parsed.success) {
      const d = describeZodError(parsed.error)
      throw invalid(`Not ready for review: ${d.message}`, d.fields)
    }
    const content = parsed.data
    const fields: Record<string, string> = {}
    if (!(await DeviceType.count({ where: { slug: content.deviceType }, transaction }))) fields.deviceType = `unknown device type "${content.deviceType}"`
    const known = new Set((await Symptom.findAll({ where: { slug: content.symptoms }, attributes: ['slug'], raw: true, transaction })).map(s => s.slug))
    content.symptoms.forEach((s, i) => {
      if (!known.has(s)) fields[`symptoms.${i}`] = `unknown symptom "${s}"`
    })
    if (Object.keys(fields).length) throw invalid(`Not ready for review: ${Object.entries(fields).map(([k, v]) => `${k}: ${v}`).join('; ')}`, fields)
    const number = proc!.lastNumber + 1
    await proc!.update({ lastNumber: number }, { transaction })
    await rev.update({ state: 'in_review', number, content, submittedAt: new Date() }, { transaction })
    await recordAudit({ actorId: actor.id, action: 'revision.submitted', entityType: 'revision', entityId: rev.id, before: { state: 'draft' }, after: { state: 'in_review', number } }, transaction)
    const editors = await editorsExcept(actor.id, transaction)
    await queueMail(editors.map(e => ({
      kind: 'review_requested',
      to: e.email,
      subject: `Review needed: ${content.title} (revision ${number})`,
      text: `${actor.name} submitted revision ${number} of "${content.title}" for review.\n\n${rev.changeNote ? `Change note: ${rev.changeNote}\n\n` : ''}Review it here: ${appOrigin.replace(/\/$/, '')}/review/${rev.id}\n`,
    })), transaction)
    return rev
  })
}

/** Two revisions of one procedure side by side: their summaries and what changed between them. */
export async function compareRevisions(id: number, otherId: number, user: User): Promise<RevisionComparisonDto> {
  const [a, b] = await Promise.all([loadVisibleRevision(id, user), loadVisibleRevision(otherId, user)])
  if (a.proc.id !== b.proc.id) throw invalid('Both revisions must belong to the same procedure.')
  const [da, db] = await Promise.all([revisionDetail(a.rev, a.proc, user), revisionDetail(b.rev, b.proc, user)])
  const strip = ({ content: _c, rendered: _r, comments: _m, attachments: _a, labels: _l, procedure: _p, can: _k, ...s }: RevisionDetailDto): RevisionSummaryDto => s
  const labels = [da.labels, db.labels]
  const names = {
    deviceTypes: Object.fromEntries(labels.flatMap(l => (l.deviceType ? [[l.deviceType.slug, l.deviceType.name]] : []))),
    symptoms: Object.fromEntries(labels.flatMap(l => l.symptoms.map(s => [s.slug, s.name]))),
  }
  return { a: strip(da), b: strip(db), ...compareContents(a.rev.content, b.rev.content, names) }
}
