/**
 * What closed repair records teach the reasoning: per procedure, how often each step read each
 * verdict under each confirmed cause, how long each step took, and which branches of a flow were
 * taken. The server keeps these counts (adding a record's contribution when it closes, taking
 * it away and adding the amended one when it is amended) and hands them to the browser; both
 * sides turn a record into its contribution with the same function.
 */
import { evaluateReading } from '../readings'
import type { CheckVerdict, ReasoningCause, ReasoningStep, StepVerdict } from '../../types/verdicts'
import { recordBranches } from './branch-stats'
import { minutesPerStep } from './minutes'
import type { Moment } from './minutes'
import { UNLISTED_CAUSE } from './stats'
import type { LearnedStats } from './stats'

const PASS_WORDS = /^(?:pass(?:ed)?|ok(?:ay)?|good|yes|y|✓|✔)$/i
const FAIL_WORDS = /^(?:fail(?:ed)?|bad|faulty|no|n|✗|✘)$/i

/**
 * The verdict of a step without a measurement, from what was typed in its field.
 *
 * @example
 * judgeCheck('OK') // 'pass'
 * judgeCheck('failed') // 'fail'
 * judgeCheck('maybe') // null
 */
export function judgeCheck(text: string): CheckVerdict | null {
  const t = text.trim()
  if (PASS_WORDS.test(t)) return 'pass'
  if (FAIL_WORDS.test(t)) return 'fail'
  return null
}

/** What a record keeps per step: the typed value (a `StepEntry` satisfies it). */
export interface StepEntryLike {
  value?: string
}

/**
 * The verdict of every step that has one, as the bench shows it and as a closed record counts:
 * a measured step by `evaluateReading` (a reading questioned as a likely slip has no verdict),
 * a step without a measurement by `judgeCheck`. Steps left empty or unreadable are absent.
 *
 * @example
 * recordVerdicts(steps, { bridge: { value: '0.012' }, capture: { value: 'fail' } })
 * // → { bridge: 'low', capture: 'fail' }
 */
export function recordVerdicts(
  steps: ReadonlyArray<Pick<ReasoningStep, 'key' | 'measurement'>>,
  entries: Readonly<Record<string, StepEntryLike | undefined>>,
): Record<string, StepVerdict> {
  const out: Record<string, StepVerdict> = {}
  for (const step of steps) {
    const value = entries[step.key]?.value ?? ''
    if (value.trim() === '') continue
    if (!step.measurement) {
      const verdict = judgeCheck(value)
      if (verdict) out[step.key] = verdict
      continue
    }
    const result = evaluateReading(value, step.measurement, [], { ask: true })
    if (result.ok && result.verdict !== null) out[step.key] = result.verdict
  }
  return out
}

export interface ClosedRecordInput {
  steps: ReadonlyArray<ReasoningStep>
  causes: ReadonlyArray<Pick<ReasoningCause, 'key'>>
  entries: Readonly<Record<string, StepEntryLike | undefined>>
  /** The confirmed cause's key within this procedure (without the procedure slug), or null. */
  confirmedCause: string | null
  /** The record's outcome; `escalated` confirms the flow's `escalate` conclusions. */
  outcome?: string
  /** When the record was opened, and when each reading was typed: for the step minutes. */
  startedAt?: Moment
  readingTimes?: ReadonlyArray<{ stepKey: string, at: Moment }>
}

/** One closed record's share of the statistics; `addToStats` adds it. */
export interface RecordContribution {
  /** The confirmed cause key, or UNLISTED_CAUSE. */
  cause: string
  verdicts: Record<string, StepVerdict>
  minutes: Record<string, number>
  branches: Array<{ stepKey: string, verdict: StepVerdict, confirmed: boolean }>
}

/**
 * Turns a closed record into what it adds to its procedure's statistics: its cause (or "not
 * listed"), the verdict of each step, the minutes of each timed step (`minutesPerStep`) and, in
 * a flow, the branches on its path with whether the branch's conclusion was the one confirmed.
 *
 * @example
 * const c = recordContribution({ steps, causes, entries: record.steps, confirmedCause: 'bridge_shorted',
 *   outcome: 'repaired', startedAt: record.startedAt, readingTimes })
 * stats = addToStats(stats, c)
 */
export function recordContribution(input: ClosedRecordInput): RecordContribution {
  const listed = new Set(input.causes.map(c => c.key))
  const cause = input.confirmedCause !== null && listed.has(input.confirmedCause) ? input.confirmedCause : UNLISTED_CAUSE
  const verdicts = recordVerdicts(input.steps, input.entries)
  const minutes = input.startedAt !== undefined && input.readingTimes ? minutesPerStep(input.startedAt, input.readingTimes) : {}
  const branches = recordBranches(input.steps, verdicts, cause, input.outcome)
  return { cause, verdicts, minutes, branches }
}

function bump(record: Record<string, number>, key: string, by: number, what: string): void {
  const next = (record[key] ?? 0) + by
  if (next < 0) throw new RangeError(`${what} would fall below 0`)
  record[key] = next
}

/**
 * The statistics with one record's contribution added (`weight` 1) or taken away (`weight` −1,
 * when an amendment replaces it). Returns a new object; throws RangeError if a count would fall
 * below 0 (a contribution taken away that was never added).
 *
 * @example
 * let stats = emptyStats()
 * for (const record of closed) stats = addToStats(stats, recordContribution(record))
 */
export function addToStats(stats: LearnedStats, contribution: RecordContribution, weight = 1): LearnedStats {
  const out = structuredClone(stats)
  const total = { records: out.records, unlisted: out.unlisted }
  bump(total, 'records', weight, 'records')
  if (contribution.cause === UNLISTED_CAUSE) bump(total, 'unlisted', weight, 'unlisted records')
  out.records = total.records
  out.unlisted = total.unlisted
  for (const [stepKey, verdict] of Object.entries(contribution.verdicts)) {
    const byVerdict = (out.verdicts[stepKey] ??= {})
    bump((byVerdict[verdict] ??= {}), contribution.cause, weight, `count of ${stepKey}/${verdict}/${contribution.cause}`)
  }
  for (const [stepKey, minutes] of Object.entries(contribution.minutes)) {
    bump((out.minutes[stepKey] ??= {}), String(minutes), weight, `minutes of ${stepKey}`)
  }
  for (const b of contribution.branches) {
    const branch = ((out.branches[b.stepKey] ??= {})[b.verdict] ??= { taken: 0, confirmed: 0 })
    bump(branch, 'taken', weight, `branch ${b.stepKey}/${b.verdict}`)
    if (b.confirmed) bump(branch, 'confirmed', weight, `confirmed branch ${b.stepKey}/${b.verdict}`)
  }
  return out
}
