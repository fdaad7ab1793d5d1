import { createError } from 'h3'
import { LRUCache } from 'lru-cache'
import { Op, type Transaction, type WhereOptions } from 'sequelize'
import { roleAtLeast } from '../../shared/types/roles'
import { RevisionContent, type DraftContent, type RevisionState } from '../../shared/types/procedure'
import { CAUTION_HAZARDS } from '../../shared/types/hazards'
import type {
  AttachmentDto, Paginated, PersonDto, ProcedureListItemDto, ProcedureReadDto, RenderedContent, ReviewCommentDto,
  RevisionDetailDto, RevisionSummaryDto,
} from '../../shared/types/procedure-api'
import { slugify } from '../../shared/utils/slug'
import { describeZodError } from '../../shared/utils/validation'
import { Attachment, DeviceType, Procedure, ReviewComment, Revision, Symptom, User, afterModelChange, contentPart, inTransaction, jsonArray, useDb } from '../db'
import { renderMarkdown } from '../utils/markdown'
import { recordAudit } from './audit'
import { notifyProcedureChanged } from './change-log'
import { queueMail } from './mail'
import { mergedSymptomSlugs, toDeviceTypeDto, toSymptomDto } from './vocabulary'

// ── who may see what ────────────────────────────────────────────────────────────────────────
// Drafts: their author and editors. Submitted revisions: authors and up. Technicians: only the
// live (published) revision of an active procedure. Anything else answers 404, so a technician
// cannot even learn that a draft exists.

export function canSeeRevision(user: User, rev: Revision, proc: Procedure): boolean {
  if (rev.state === 'draft') return rev.authorId === user.id || roleAtLeast(user.role, 'editor')
  if (roleAtLeast(user.role, 'author')) return true
  return rev.state === 'published' && proc.status === 'active' && proc.publishedRevisionId === rev.id
}

const notFound = (what = 'revision') => createError({ statusCode: 404, message: `No such ${what}.` })
const wrongState = (rev: Revision, wanted: string) => createError({
  statusCode: 409,
  message: `This revision is ${STATE_WORDS[rev.state as RevisionState]} (${rev.state}); it must be ${wanted} for that.`,
  data: { state: rev.state },
})
const STATE_WORDS: Record<RevisionState, string> = {
  draft: 'a draft',
  in_review: 'awaiting review',
  published: 'live',
  superseded: 'an earlier revision',
  changes_requested: 'sent back to its author',
  rejected: 'declined',
}

async function loadRevision(id: number, transaction?: Transaction, lock = false): Promise<{ rev: Revision, proc: Procedure }> {
  const rev = await Revision.findByPk(id, { transaction, lock: lock && transaction ? transaction.LOCK.UPDATE : undefined })
  if (!rev) throw notFound()
  const proc = await Procedure.findByPk(rev.procedureId, { transaction, lock: lock && transaction ? transaction.LOCK.UPDATE : undefined })
  if (!proc) throw notFound()
  return { rev, proc }
}

export async function loadVisibleRevision(id: number, user: User): Promise<{ rev: Revision, proc: Procedure }> {
  const found = await loadRevision(id)
  if (!canSeeRevision(user, found.rev, found.proc)) throw notFound()
  return found
}

// ── shaping answers ──────────────────────────────────────────────────────────────────────────

async function people(ids: Array<number | null | undefined>): Promise<Map<number, PersonDto>> {
  const unique = [...new Set(ids.filter((i): i is number => typeof i === 'number'))]
  if (!unique.length) return new Map()
  const rows = await User.findAll({ where: { id: unique }, attributes: ['id', 'name'], raw: true })
  return new Map(rows.map(r => [r.id, { id: r.id, name: r.name }]))
}

const iso = (d: Date | null | undefined) => (d ? new Date(d).toISOString() : null)

function summary(rev: Revision, proc: Procedure, who: Map<number, PersonDto>): RevisionSummaryDto {
  return {
    id: rev.id,
    procedureId: proc.id,
    procedureSlug: proc.slug,
    number: rev.number,
    state: rev.state,
    title: rev.content.title,
    author: who.get(rev.authorId) ?? { id: rev.authorId, name: 'Unknown' },
    reviewer: rev.reviewerId ? who.get(rev.reviewerId) ?? null : null,
    changeNote: rev.changeNote,
    baseRevisionId: rev.baseRevisionId,
    version: rev.version,
    createdAt: rev.createdAt.toISOString(),
    updatedAt: rev.updatedAt.toISOString(),
    submittedAt: iso(rev.submittedAt),
    decidedAt: iso(rev.decidedAt),
    publishedAt: iso(rev.publishedAt),
  }
}

export function renderContent(content: RevisionContent | DraftContent): RenderedContent {
  return {
    summary: renderMarkdown(content.summary ?? ''),
    fix: renderMarkdown(content.fix ?? ''),
    verification: renderMarkdown(content.verification ?? ''),
    causes: Object.fromEntries((content.causes ?? []).map(c => [c.key, renderMarkdown(c.detail ?? '')])),
    steps: Object.fromEntries((content.steps ?? []).map(s => [s.key, renderMarkdown(s.instruction ?? '')])),
  }
}

export function toAttachmentDto(a: Attachment): AttachmentDto {
  return {
    id: a.id,
    url: `/api/files/${a.id}`,
    thumbnailUrl: `/api/files/${a.id}?size=thumb`,
    width: a.width ?? 0,
    height: a.height ?? 0,
    mime: a.mime,
    bytes: a.bytes,
    caption: a.caption,
  }
}

async function attachmentsOf(content: RevisionContent | DraftContent): Promise<Record<string, AttachmentDto>> {
  const ids = [...new Set((content.steps ?? []).flatMap(s => s.imageIds ?? []))]
  if (!ids.length) return {}
  const rows = await Attachment.findAll({ where: { id: ids, kind: 'image' } })
  return Object.fromEntries(rows.map(a => [String(a.id), toAttachmentDto(a)]))
}

async function labelsOf(content: RevisionContent | DraftContent) {
  const [deviceType, symptoms] = await Promise.all([
    content.deviceType ? DeviceType.findOne({ where: { slug: content.deviceType } }) : null,
    content.symptoms?.length ? Symptom.findAll({ where: { slug: content.symptoms } }) : [],
  ])
  const mergedIds = symptoms.map(s => s.mergedIntoId).filter((x): x is number => !!x)
  const targets = mergedIds.length ? await Symptom.findAll({ where: { id: mergedIds } }) : []
  const slugById = new Map([...symptoms, ...targets].map(s => [s.id, s.slug]))
  const order = new Map((content.symptoms ?? []).map((s, i) => [s, i]))
  return {
    deviceType: deviceType ? toDeviceTypeDto(deviceType) : null,
    symptoms: symptoms.map(s => toSymptomDto(s, slugById)).sort((a, b) => (order.get(a.slug) ?? 0) - (order.get(b.slug) ?? 0)),
  }
}

export async function revisionDetail(rev: Revision, proc: Procedure, user: User): Promise<RevisionDetailDto> {
  const comments = await ReviewComment.findAll({ where: { revisionId: rev.id }, order: [['createdAt', 'ASC'], ['id', 'ASC']] })
  const who = await people([rev.authorId, rev.reviewerId, ...comments.map(c => c.authorId)])
  const isAuthor = rev.authorId === user.id
  const isEditor = roleAtLeast(user.role, 'editor')
  const [attachments, labels] = await Promise.all([attachmentsOf(rev.content), labelsOf(rev.content)])
  return {
    ...summary(rev, proc, who),
    content: rev.content,
    rendered: renderContent(rev.content),
    comments: comments.map(c => toCommentDto(c, who)),
    attachments,
    labels,
    procedure: { id: proc.id, slug: proc.slug, status: proc.status, publishedRevisionId: proc.publishedRevisionId },
    can: {
      edit: rev.state === 'draft' && isAuthor,
      submit: rev.state === 'draft' && isAuthor,
      review: rev.state === 'in_review' && isEditor && !isAuthor,
      comment: (rev.state === 'in_review' || rev.state === 'changes_requested') && (isEditor || isAuthor),
      startDraft: roleAtLeast(user.role, 'author') && proc.status === 'active' && (rev.state === 'published' || (rev.state === 'changes_requested' && isAuthor)),
    },
  }
}

export function toCommentDto(c: ReviewComment, who: Map<number, PersonDto>): ReviewCommentDto {
  return {
    id: c.id,
    author: who.get(c.authorId) ?? { id: c.authorId, name: 'Unknown' },
    body: c.body,
    stepKey: c.stepKey,
    resolved: c.resolved,
    createdAt: c.createdAt.toISOString(),
  }
}

// ── reading ─────────────────────────────────────────────────────────────────────────────────

export async function findProcedure(slug: string): Promise<Procedure> {
  const proc = await Procedure.findOne({ where: { slug } })
  if (!proc) throw notFound('procedure')
  return proc
}

// What a published revision shows beside the live status: its content never changes once
// published, so the shaped part (rendered text, photos, labels, author and reviewer) is kept per
// revision. The labels, captions and names it carries can change: any change to those tables
// through this instance empties the cache after commit; a change made through another instance
// shows here within VIEW_TTL_MS. The procedure row (live revision, retired or not) and the pending
// revisions are read on every request, so publishing and retiring show at once everywhere.
type PublishedView = Omit<ProcedureReadDto, 'procedure' | 'pending'>
const VIEW_TTL_MS = 5000
const publishedViews = new LRUCache<number, PublishedView>({ max: 500, ttl: VIEW_TTL_MS })
let watchingViews = false
let viewGeneration = 0 // bumped by every change: a view read before a change is not kept after it

async function publishedView(revisionId: number): Promise<PublishedView | null> {
  if (!watchingViews) {
    watchingViews = true
    afterModelChange([Attachment, DeviceType, Symptom, User], () => {
      viewGeneration++
      publishedViews.clear()
    })
  }
  const hit = publishedViews.get(revisionId)
  if (hit) return hit
  const generation = viewGeneration
  const rev = await Revision.findByPk(revisionId)
  if (!rev) return null
  const [who, attachments, labels] = await Promise.all([people([rev.authorId, rev.reviewerId]), attachmentsOf(rev.content), labelsOf(rev.content)])
  const view: PublishedView = {
    revision: { id: rev.id, number: rev.number!, state: rev.state, content: rev.content, publishedAt: rev.publishedAt!.toISOString() },
    rendered: renderContent(rev.content),
    attachments,
    labels,
    author: who.get(rev.authorId)!,
    reviewer: rev.reviewerId ? who.get(rev.reviewerId) ?? null : null,
  }
  if (generation === viewGeneration) publishedViews.set(revisionId, view)
  return view
}

export async function readPublished(slug: string, user: User): Promise<ProcedureReadDto> {
  const proc = await findProcedure(slug)
  const view = proc.publishedRevisionId ? await publishedView(proc.publishedRevisionId) : null
  if (!view || (proc.status === 'retired' && !roleAtLeast(user.role, 'editor'))) {
    throw createError({ statusCode: 404, message: proc.status === 'retired' ? 'This procedure was retired.' : 'This procedure has no reviewed revision yet.' })
  }
  const pendingRows = roleAtLeast(user.role, 'author')
    ? (await Revision.findAll({ where: { procedureId: proc.id, state: ['draft', 'in_review', 'changes_requested'] }, order: [['id', 'ASC']] }))
        .filter(r => canSeeRevision(user, r, proc))
    : []
  const who = await people(pendingRows.map(r => r.authorId))
  return {
    procedure: { id: proc.id, slug: proc.slug, status: proc.status },
    ...view,
    pending: pendingRows.map(r => ({ id: r.id, number: r.number, state: r.state, author: who.get(r.authorId)! })),
  }
}

type ListRow = { id: number, number: number, publishedAt: Date | string, title: string, deviceType: string, symptoms: unknown, hazards: unknown, procedure: { id: number, slug: string } }

/** The published, active procedures, newest first, filtered by device type and symptom. */
export async function listPublished(filter: { deviceType?: string, symptom?: string, page: number, pageSize: number }): Promise<Paginated<ProcedureListItemDto>> {
  const sequelize = useDb()
  const where: WhereOptions[] = [{ state: 'published' }]
  if (filter.deviceType) where.push(sequelize.where(contentPart('JSON_VALUE', '$.deviceType'), filter.deviceType))
  const mergedInto = await mergedSymptomSlugs()
  const resolve = (slugs: string[]) => [...new Set(slugs.map(s => mergedInto.get(s) ?? s))]
  if (filter.symptom) {
    // A procedure written with a symptom since merged into this one is listed under it.
    const wanted = [filter.symptom, ...[...mergedInto].filter(([, into]) => into === filter.symptom).map(([from]) => from)]
    where.push({ [Op.or]: wanted.map(s => sequelize.where(sequelize.fn('JSON_CONTAINS', sequelize.col('content'), JSON.stringify(s), sequelize.literal('\'$.symptoms\'')), 1)) })
  }
  // Only the parts of the content a list shows: parsing whole procedures (steps and all) for a
  // page of 20 was most of this route's time.
  const { rows: found, count } = await Revision.findAndCountAll({
    attributes: ['id', 'number', 'publishedAt', [contentPart('JSON_VALUE', '$.title'), 'title'], [contentPart('JSON_VALUE', '$.deviceType'), 'deviceType'], [contentPart('JSON_EXTRACT', '$.symptoms'), 'symptoms'], [contentPart('JSON_EXTRACT', '$.hazards'), 'hazards']],
    where: { [Op.and]: where },
    include: [{ model: Procedure, as: 'procedure', attributes: ['id', 'slug'], where: { status: 'active' }, required: true }],
    order: [['publishedAt', 'DESC'], ['id', 'DESC']],
    limit: filter.pageSize,
    offset: (filter.page - 1) * filter.pageSize,
    raw: true,
    nest: true,
  })
  const rows = (found as unknown as ListRow[]).map(r => ({ ...r, symptoms: jsonArray<string>(r.symptoms), hazards: jsonArray<RevisionContent['hazards'][number]>(r.hazards) }))
  const slugs = new Set<string>()
  for (const r of rows) for (const s of [r.deviceType, ...resolve(r.symptoms)]) slugs.add(s)
  const [types, symptoms] = await Promise.all([
    DeviceType.findAll({ where: { slug: [...slugs] }, raw: true }),
    Symptom.findAll({ where: { slug: [...slugs] }, attributes: ['slug', 'name'], raw: true }),
  ])
  const typeName = new Map(types.map(t => [t.slug, t.name]))
  const symptomName = new Map(symptoms.map(s => [s.slug, s.name]))
  return {
    data: rows.map(r => ({
      id: r.procedure.id,
      slug: r.procedure.slug,
      title: r.title,
      deviceType: { slug: r.deviceType, name: typeName.get(r.deviceType) ?? r.deviceType },
      symptoms: resolve(r.symptoms).map(s => ({ slug: s, name: symptomName.get(s) ?? s })),
      hazards: r.hazards,
      revisionNumber: r.number,
      publishedAt: new Date(r.publishedAt).toISOString(),
    })),
    meta: { total: count, page: filter.page, pageSize: filter.pageSize, pages: Math.max(1, Math.ceil(count / filter.pageSize)) },
  }
}

export async function listRevisionsOf(slug: string, user: User): Promise<RevisionSummaryDto[]> {
  const proc = await findProcedure(slug)
  const rows = (await Revision.findAll({ where: { procedureId: proc.id }, order: [['id', 'DESC']] })).filter(r => canSeeRevision(user, r, proc))
  if (!rows.length) throw notFound('procedure')
  const who = await people(rows.flatMap(r => [r.authorId, r.reviewerId]))
  return rows.map(r => summary(r, proc, who))
}

/** `mine`: the caller's own revisions, newest first; `queue`: awaiting review, oldest first. */
export async function listRevisionsFor(user: User, scope: 'mine' | 'queue', state?: RevisionState): Promise<RevisionSummaryDto[]> {
  if (scope === 'queue' && !roleAtLeast(user.role, 'editor')) throw createError({ statusCode: 403, message: 'The review queue is for editors.' })
  const where = scope === 'mine'
    ? { authorId: user.id, ...(state ? { state } : {}) }
    : { state: 'in_review' as const }
  const rows = await Revision.findAll({
    where,
    include: [{ model: Procedure, as: 'procedure', required: true }],
    order: scope === 'queue' ? [['submittedAt', 'ASC'], ['id', 'ASC']] : [['updatedAt', 'DESC'], ['id', 'DESC']],
    limit: 500,
  })
  const who = await people(rows.flatMap(r => [r.authorId, r.reviewerId]))
  return rows.map(r => summary(r, (r as Revision & { procedure: Procedure }).procedure, who))
}

// ── writing ─────────────────────────────────────────────────────────────────────────────────

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

/**
 * A new draft for the caller: from the live revision, or from a revision that was sent back to
 * them. One open draft per author and procedure.
 */
export async function startDraft(slug: string, actor: User, fromId?: number) {
  return await inTransaction(async (transaction) => {
    const proc = await Procedure.findOne({ where: { slug }, transaction, lock: transaction.LOCK.UPDATE })
    if (!proc) throw notFound('procedure')
    if (proc.status === 'retired') throw createError({ statusCode: 409, message: 'This procedure is retired; it takes no new revisions.' })
    const open = await Revision.findOne({ where: { procedureId: proc.id, authorId: actor.id, state: 'draft' }, transaction })
    if (open) throw createError({ statusCode: 409, message: 'You already have a draft of this procedure.', data: { revisionId: open.id } })
    const base = fromId ? await Revision.findByPk(fromId, { transaction }) : proc.publishedRevisionId ? await Revision.findByPk(proc.publishedRevisionId, { transaction }) : null
    if (!base || base.procedureId !== proc.id) throw createError({ statusCode: 404, message: fromId ? 'No such revision of this procedure.' : 'This procedure has no live revision to start from.' })
    if (fromId && !(base.state === 'changes_requested' && base.authorId === actor.id) && base.state !== 'published') {
      throw createError({ statusCode: 409, message: 'A new draft starts from the live revision or from one that was sent back to you.', data: { state: base.state } })
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
    if (!canSeeRevision(actor, rev, proc)) throw notFound()
    if (rev.authorId !== actor.id) throw createError({ statusCode: 403, message: 'Only the author of a draft can change it.' })
    if (rev.state !== 'draft') throw wrongState(rev, 'a draft')
    if (rev.version !== input.version) return { stale: true as const, rev, proc }
    await rev.update({ content: input.content as RevisionContent, changeNote: input.changeNote ?? rev.changeNote, version: rev.version + 1 }, { transaction })
    return { stale: false as const, rev, proc }
  })
  if (result.stale) {
    throw createError({
      statusCode: 409,
      message: `This draft was saved elsewhere meanwhile (version ${result.rev.version}, yours was based on ${input.version}). Both versions are kept: choose which to continue from.`,
      data: { current: await revisionDetail(result.rev, result.proc, actor) },
    })
  }
  return result.rev
}

async function editorsExcept(authorId: number, transaction: Transaction) {
  return await User.findAll({ where: { role: ['editor', 'admin'], active: true, id: { [Op.ne]: authorId } }, transaction })
}

export async function submitRevision(id: number, actor: User, appOrigin: string) {
  return await inTransaction(async (transaction) => {
    const { rev } = await loadRevision(id, transaction, false)
    if (rev.authorId !== actor.id) {
      if (rev.state === 'draft' && !roleAtLeast(actor.role, 'editor')) throw notFound()
      throw createError({ statusCode: 403, message: 'Only the author can submit a draft.' })
    }
    // The procedure row is the lock that serialises submissions: numbers are gapless and unique.
    const proc = await Procedure.findByPk(rev.procedureId, { transaction, lock: transaction.LOCK.UPDATE })
    await rev.reload({ transaction, lock: transaction.LOCK.UPDATE })
    if (rev.state !== 'draft') throw wrongState(rev, 'a draft')
    const parsed = RevisionContent.safeParse(rev.content)
    if (!parsed.success) {
      const d = describeZodError(parsed.error)
      throw createError({ statusCode: 422, message: `Not ready for review: ${d.message}`, data: { fields: d.fields } })
    }
    const content = parsed.data
    const fields: Record<string, string> = {}
    if (!(await DeviceType.count({ where: { slug: content.deviceType }, transaction }))) fields.deviceType = `unknown device type "${content.deviceType}"`
    const known = new Set((await Symptom.findAll({ where: { slug: content.symptoms }, attributes: ['slug'], raw: true, transaction })).map(s => s.slug))
    content.symptoms.forEach((s, i) => {
      if (!known.has(s)) fields[`symptoms.${i}`] = `unknown symptom "${s}"`
    })
    if (Object.keys(fields).length) throw createError({ statusCode: 422, message: `Not ready for review: ${Object.entries(fields).map(([k, v]) => `${k}: ${v}`).join('; ')}`, data: { fields } })
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

export type Decision = 'approve' | 'request_changes' | 'reject'
const DECISION_STATE: Record<Decision, RevisionState> = { approve: 'published', request_changes: 'changes_requested', reject: 'rejected' }

export async function decideRevision(id: number, decision: Decision, comment: string | undefined, actor: User, appOrigin: string) {
  return await inTransaction(async (transaction) => {
    const { rev } = await loadRevision(id, transaction, false)
    const proc = await Procedure.findByPk(rev.procedureId, { transaction, lock: transaction.LOCK.UPDATE })
    await rev.reload({ transaction, lock: transaction.LOCK.UPDATE })
    if (rev.authorId === actor.id) throw createError({ statusCode: 403, message: 'Four eyes: another editor must review your own revision.' })
    if (rev.state !== 'in_review') throw wrongState(rev, 'awaiting review')
    if (decision === 'approve') {
      const proposed = await Symptom.findAll({ where: { slug: rev.content.symptoms, status: 'proposed' }, transaction })
      if (proposed.length) throw createError({ statusCode: 409, message: `Accept or merge the proposed symptom${proposed.length > 1 ? 's' : ''} ${proposed.map(s => `"${s.name}"`).join(', ')} before publishing.` })
      if (proc!.status === 'retired') throw createError({ statusCode: 409, message: 'This procedure is retired; it cannot be published again.' })
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
    if (proc.status === 'retired') throw createError({ statusCode: 409, message: 'This procedure is already retired.', data: { status: proc.status } })
    await proc.update({ status: 'retired', retiredAt: new Date() }, { transaction })
    await notifyProcedureChanged(proc.id, transaction)
    await recordAudit({ actorId: actor.id, action: 'procedure.retired', entityType: 'procedure', entityId: proc.id, before: { status: 'active' }, after: { status: 'retired', reason } }, transaction)
    return proc
  })
}

export async function addComment(revisionId: number, input: { body: string, stepKey?: string }, actor: User) {
  const { rev, proc } = await loadVisibleRevision(revisionId, actor)
  if (!(rev.authorId === actor.id || roleAtLeast(actor.role, 'editor'))) throw createError({ statusCode: 403, message: 'Review comments are for editors and the revision\'s author.' })
  if (rev.state !== 'in_review' && rev.state !== 'changes_requested') throw wrongState(rev, 'awaiting review or sent back')
  if (input.stepKey && !rev.content.steps.some(s => s.key === input.stepKey)) {
    throw createError({ statusCode: 422, message: `This revision has no step "${input.stepKey}".`, data: { fields: { stepKey: 'no such step' } } })
  }
  const comment = await ReviewComment.create({ revisionId: rev.id, authorId: actor.id, body: input.body, stepKey: input.stepKey ?? null })
  void proc
  return toCommentDto(comment, await people([actor.id]))
}

export async function resolveComment(commentId: number, resolved: boolean, actor: User) {
  const comment = await ReviewComment.findByPk(commentId)
  if (!comment) throw notFound('comment')
  const { rev } = await loadVisibleRevision(comment.revisionId, actor)
  if (!(rev.authorId === actor.id || roleAtLeast(actor.role, 'editor'))) throw createError({ statusCode: 403, message: 'Only editors and the revision\'s author resolve comments.' })
  await comment.update({ resolved })
  return toCommentDto(comment, await people([comment.authorId]))
}

export function cautionNeeded(hazards: readonly string[]): boolean {
  return hazards.some(h => (CAUTION_HAZARDS as readonly string[]).includes(h))
}
