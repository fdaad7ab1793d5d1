import type { Order, WhereOptions } from 'sequelize'
import { roleAtLeast } from '../../../shared/types/roles'
import type { DraftContent, RevisionContent } from '../../../shared/types/procedure'
import type {
  AttachmentDto, PersonDto, RenderedContent, ReviewCommentDto, RevisionDetailDto, RevisionSummaryDto,
} from '../../../shared/types/procedure-api'
import { Attachment, DeviceType, Procedure, ReviewComment, Revision, Symptom, User } from '../../db'
import { renderMarkdown } from '../../utils/markdown'
import { toAttachmentDto } from '../uploads/attachments'
import { toDeviceTypeDto, toSymptomDto } from '../vocabulary'

// How revisions are shown: summaries, the full detail with rendered text, photos and labels.

/** Names of the people behind these ids, as others see them. */
export async function people(ids: Array<number | null | undefined>): Promise<Map<number, PersonDto>> {
  const unique = [...new Set(ids.filter((i): i is number => typeof i === 'number'))]
  if (!unique.length) return new Map()
  const rows = await User.findAll({ where: { id: unique }, attributes: ['id', 'name'], raw: true })
  return new Map(rows.map(r => [r.id, { id: r.id, name: r.name }]))
}

const iso = (d: Date | null | undefined) => (d ? new Date(d).toISOString() : null)

export function summary(rev: Revision, proc: Procedure, who: Map<number, PersonDto>): RevisionSummaryDto {
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

export async function attachmentsOf(content: RevisionContent | DraftContent): Promise<Record<string, AttachmentDto>> {
  const ids = [...new Set((content.steps ?? []).flatMap(s => s.imageIds ?? []))]
  if (!ids.length) return {}
  const rows = await Attachment.findAll({ where: { id: ids, kind: 'image' } })
  return Object.fromEntries(rows.map(a => [String(a.id), toAttachmentDto(a)]))
}

export async function labelsOf(content: RevisionContent | DraftContent) {
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

/** Revisions matching `where`, with their procedure, as summaries (at most 500). */
export async function revisionSummaries(where: WhereOptions<Revision>, order: Order): Promise<RevisionSummaryDto[]> {
  const rows = await Revision.findAll({
    where,
    include: [{ model: Procedure, as: 'procedure', required: true }],
    order,
    limit: 500,
  })
  const who = await people(rows.flatMap(r => [r.authorId, r.reviewerId]))
  return rows.map(r => summary(r, (r as Revision & { procedure: Procedure }).procedure, who))
}
