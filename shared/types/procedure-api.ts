import type { ProcedureStatus, RevisionContent, RevisionState } from './procedure'

/** A person as other people see them in procedures and reviews. */
export interface PersonDto { id: number, name: string }

export interface DeviceTypeDto { id: number, slug: string, name: string, description: string }
export type SymptomStatus = 'accepted' | 'proposed' | 'merged'
export interface SymptomDto {
  id: number
  slug: string
  name: string
  description: string
  synonyms: string[]
  status: SymptomStatus
  /** For a merged symptom: the slug it now stands for. */
  mergedInto?: string | null
}

/** Sanitised HTML of every Markdown field of a revision, rendered on the server. */
export interface RenderedContent {
  summary: string
  fix: string
  verification: string
  causes: Record<string, string>
  steps: Record<string, string>
}

export interface AttachmentDto {
  id: number
  url: string
  thumbnailUrl: string
  width: number
  height: number
  mime: string
  bytes: number
  caption: string
}

export interface ReviewCommentDto {
  id: number
  author: PersonDto
  body: string
  stepKey: string | null
  resolved: boolean
  createdAt: string
}

export interface RevisionSummaryDto {
  id: number
  procedureId: number
  procedureSlug: string
  /** Null while a draft: numbers are assigned at submission. */
  number: number | null
  state: RevisionState
  title: string
  author: PersonDto
  reviewer: PersonDto | null
  changeNote: string
  baseRevisionId: number | null
  /** Draft save counter, sent back with PUT to detect a stale editor. */
  version: number
  createdAt: string
  updatedAt: string
  submittedAt: string | null
  decidedAt: string | null
  publishedAt: string | null
}

export interface RevisionDetailDto extends RevisionSummaryDto {
  /** Drafts may be incomplete; submitted revisions always pass RevisionContent. */
  content: RevisionContent
  rendered: RenderedContent
  comments: ReviewCommentDto[]
  /** Images referenced by the steps, by id. */
  attachments: Record<string, AttachmentDto>
  /** Device type and symptom names for the slugs in content. */
  labels: { deviceType: DeviceTypeDto | null, symptoms: SymptomDto[] }
  procedure: { id: number, slug: string, status: ProcedureStatus, publishedRevisionId: number | null }
  /** What the caller may do with this revision now (the server checks again). */
  can: { edit: boolean, submit: boolean, review: boolean, comment: boolean, startDraft: boolean }
}

/** GET /api/procedures/[slug] */
export interface ProcedureReadDto {
  procedure: { id: number, slug: string, status: ProcedureStatus }
  revision: { id: number, number: number, state: RevisionState, content: RevisionContent, publishedAt: string }
  rendered: RenderedContent
  attachments: Record<string, AttachmentDto>
  labels: { deviceType: DeviceTypeDto | null, symptoms: SymptomDto[] }
  author: PersonDto
  reviewer: PersonDto | null
  /** Revisions in flight on top of the published one, for authors and editors. */
  pending: Array<{ id: number, number: number | null, state: RevisionState, author: PersonDto }>
}

/** The library's orders (`sort`; `live`: newest live revision first) and groupings (`group`). */
export const LIBRARY_SORTS = ['live', 'title'] as const
export type LibrarySort = (typeof LIBRARY_SORTS)[number]
export const LIBRARY_GROUPS = ['none', 'device'] as const
export type LibraryGroup = (typeof LIBRARY_GROUPS)[number]

/** GET /api/procedures (published, active) */
export interface ProcedureListItemDto {
  id: number
  slug: string
  title: string
  deviceType: { slug: string, name: string }
  symptoms: Array<{ slug: string, name: string }>
  hazards: string[]
  revisionNumber: number
  publishedAt: string
}

export interface Paginated<T> {
  data: T[]
  meta: { total: number, page: number, pageSize: number, pages: number }
}

/** GET /api/revisions/[a]/compare/[b] */
export interface TextDiffPart { value: string, added?: boolean, removed?: boolean }
export interface FieldChange {
  field: string
  label: string
  parts: TextDiffPart[]
  /** The change in one sentence, where a word diff would not say it well: `if it reads low: was → step 4, now → confirms Bridge diode shorted`. */
  summary?: string
}
export type ItemChangeKind = 'added' | 'removed' | 'changed' | 'moved' | 'unchanged'
export interface ItemChange {
  key: string
  kind: ItemChangeKind
  /** Position before and after (0-based), null where absent. */
  from: number | null
  to: number | null
  title: string
  fields: FieldChange[]
}
export interface RevisionComparisonDto {
  a: RevisionSummaryDto
  b: RevisionSummaryDto
  fields: FieldChange[]
  causes: ItemChange[]
  steps: ItemChange[]
  parts: ItemChange[]
}

/** The `{ data }` answer of a list that is not paged. */
export interface ListDto<T> { data: T[] }

/** GET /api/symptoms/common: accepted symptoms by how many repair records name them. */
export interface CommonSymptomDto { slug: string, name: string, records: number }

/** POST /api/procedures */
export interface ProcedureCreatedDto {
  procedure: { id: number, slug: string }
  revision: { id: number, version: number }
}

/** POST /api/procedures/[slug]/revisions and PUT /api/revisions/[id]: the draft and its save counter. */
export interface DraftSavedDto { revision: { id: number, version: number } }

/** POST /api/revisions/[id]/submit, approve, request-changes, reject. */
export interface RevisionStateDto { revision: { id: number, number: number | null, state: RevisionState } }

/** POST /api/procedures/[slug]/retire */
export interface ProcedureRetiredDto { procedure: { id: number, slug: string, status: ProcedureStatus } }

/** POST /api/revisions/[id]/comments and PATCH /api/review-comments/[id] */
export interface ReviewCommentSavedDto { comment: ReviewCommentDto }

/** POST /api/uploads */
export type UploadedImageDto = Pick<AttachmentDto, 'id' | 'url' | 'thumbnailUrl' | 'width' | 'height'>

/** PATCH /api/uploads/[id] */
export interface CaptionSavedDto { id: number, caption: string }
