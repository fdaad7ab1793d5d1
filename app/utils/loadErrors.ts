// What each page says in place of what could not be loaded (AppLoadError): after a 404, and
// after any other failure.

interface LoadErrorWords { missing: string, failed: string, missingText?: string, back: { to: string, label: string } }

export const PAGE_LOAD_ERRORS = {
  procedure: {
    missing: 'No live procedure here', failed: 'The procedure could not be loaded',
    missingText: 'It may not be published yet, or it has been retired.', back: { to: '/procedures', label: 'Back to all procedures' },
  },
  revision: {
    missing: 'No revision here', failed: 'The revision could not be loaded',
    missingText: 'It does not exist, or it is a draft that only its author can see.', back: { to: '/procedures', label: 'Back to all procedures' },
  },
  review: {
    missing: 'No revision here', failed: 'The revision could not be loaded',
    missingText: 'It does not exist, or it is a draft nobody has submitted yet.', back: { to: '/review', label: 'Back to the review queue' },
  },
  record: { missing: 'No such record', failed: 'The record could not be loaded', back: { to: '/records', label: 'Back to the records' } },
} satisfies Record<string, LoadErrorWords>
