import type { RevisionState } from '#shared/types/procedure'

/** Benchlore's own words for revision states; every page uses these and no others. */
export const REVISION_STATE_LABELS: Record<RevisionState, string> = {
  draft: 'Draft',
  in_review: 'Awaiting review',
  published: 'Live',
  superseded: 'Earlier',
  changes_requested: 'Sent back',
  rejected: 'Declined',
}
