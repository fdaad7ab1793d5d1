import type { ReasoningStep, StepVerdict } from '../../../shared/types/verdicts'
import { followFlow, recordVerdicts } from '../../../shared/utils/diagnosis'
import { evaluateReading } from '../../../shared/utils/readings'
import type { StoredStep } from '../../db/models/repair-record'

// The steps of a record as the server keeps them: each saved reading judged by the same pure
// functions the bench runs, done once it is readable, timed when it changes.

/** Why a typed value has no verdict, in words for the field error; null when it has one or is empty. */
function unreadable(step: Pick<ReasoningStep, 'measurement'> | undefined, value: string): string | null {
  if (!step || value.trim() === '') return null
  if (!step.measurement) return `"${value.trim()}" is neither pass nor fail: type pass or fail before marking the step done`
  const result = evaluateReading(value, step.measurement, [], { ask: true })
  if (!result.ok) return `${result.error}: correct the reading before marking the step done`
  if (result.verdict === null) return `${result.question} Answer the question (correct the reading) before marking the step done`
  return null
}

/** What a save may say of a step; a save names only the fields it changes. */
export interface SentStep { value: string, note: string, done: boolean }

/**
 * The record's steps after a save: each step sent takes the fields it names over what was saved,
 * then is judged against the guide's step (its verdict, null when empty or unreadable); a
 * readable reading marks the step done; a reading is timed when its value changes (kept when it
 * does not). Steps not sent stay as they were. `fields` names each step sent as done whose
 * reading cannot be read (`steps.<key>.done`).
 *
 * @example
 * judgeSteps(content.steps, record.steps, { bridge: { value: '0.012' } }, new Date())
 * // → { steps: { bridge: { value: '0.012', note: '', done: true, verdict: 'low', readAt: '2026-…' }, … }, fields: {} }
 */
export function judgeSteps(
  guide: ReadonlyArray<ReasoningStep>,
  before: Readonly<Record<string, StoredStep>>,
  sent: Readonly<Record<string, Partial<SentStep>>>,
  now: Date,
): { steps: Record<string, StoredStep>, fields: Record<string, string> } {
  const byKey = new Map(guide.map(s => [s.key, s]))
  const steps: Record<string, StoredStep> = { ...before }
  const fields: Record<string, string> = {}
  for (const [key, entry] of Object.entries(sent)) {
    const step = byKey.get(key)
    const previous = before[key]
    const value = entry.value ?? previous?.value ?? ''
    const note = entry.note ?? previous?.note ?? ''
    const verdict: StepVerdict | null = step ? recordVerdicts([step], { [key]: { value } })[key] ?? null : null
    const why = verdict === null ? unreadable(step, value) : null
    if (why && entry.done === true) fields[`steps.${key}.done`] = why
    // A done mark the technician set (no verdict behind it) stays until they clear it; one that
    // came from a readable reading follows the reading.
    const markedByHand = previous?.done === true && (previous.verdict ?? null) === null
    const unchanged = previous !== undefined && previous.value === value && previous.verdict === verdict
    steps[key] = {
      value,
      note,
      done: verdict !== null || (why === null && (entry.done ?? markedByHand)),
      verdict,
      readAt: verdict === null ? null : unchanged && previous.readAt ? previous.readAt : now.toISOString(),
    }
  }
  return { steps, fields }
}

/** The verdict of each step, as stored. */
export function storedVerdicts(steps: Readonly<Record<string, StoredStep>>): Record<string, StepVerdict> {
  const out: Record<string, StepVerdict> = {}
  for (const [key, s] of Object.entries(steps)) if (s.verdict) out[key] = s.verdict
  return out
}

/** The step keys a flow takes with these steps' verdicts (empty for a procedure that is not a flow). */
export function flowPath(guide: ReadonlyArray<ReasoningStep>, steps: Readonly<Record<string, StoredStep>>): string[] {
  return followFlow(guide, storedVerdicts(steps)).path
}
