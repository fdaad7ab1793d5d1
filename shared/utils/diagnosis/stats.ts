/**
 * The shape of what closed repair records teach the reasoning about one procedure. The server
 * keeps these counts and hands them to the browser; `addToStats` in `learning.ts` updates them.
 */
import type { StepVerdict } from '../../types/verdicts'

/** The key under which records whose confirmed cause is not among the procedure's are counted. */
export const UNLISTED_CAUSE = '_unlisted'

/** Counts learned from the closed records of one procedure. Plain JSON, so the server can ship it. */
export interface LearnedStats {
  /** Closed records counted. */
  records: number
  /** Of those, the records closed with a cause outside this procedure's list, or with none. */
  unlisted: number
  /** n(step, verdict, cause): `verdicts[stepKey][verdict][causeKey]`, UNLISTED_CAUSE included. */
  verdicts: Record<string, Partial<Record<StepVerdict, Record<string, number>>>>
  /** Per step, a histogram of recorded whole minutes: `minutes[stepKey]['4'] = 12` records. */
  minutes: Record<string, Record<string, number>>
  /**
   * Per flow branch (step, verdict): how many records took it on their path, and of those how
   * many were finally confirmed with the cause the branch concludes (or escalated, for
   * `escalate`). `confirmed` stays 0 on branches that conclude nothing.
   */
  branches: Record<string, Partial<Record<StepVerdict, { taken: number, confirmed: number }>>>
}

/**
 * Statistics of a procedure with no closed records.
 *
 * @example
 * causeProbabilities({ causes, steps, stats: emptyStats() })
 */
export function emptyStats(): LearnedStats {
  return { records: 0, unlisted: 0, verdicts: {}, minutes: {}, branches: {} }
}
