/** The width of a bar for a share between 0 and 1, as a CSS percentage (whole percents). */
export function barWidth(share: number): string {
  return `${Math.round(Math.max(0, Math.min(1, share)) * 100)}%`
}

/** The closed records of one procedure, where a dashboard line about that procedure leads. */
export function closedRecordsOf(procedureSlug: string): string {
  return `/records?procedure=${encodeURIComponent(procedureSlug)}&status=closed`
}
