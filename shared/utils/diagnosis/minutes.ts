/**
 * How long a step takes: measured from the times readings were typed, kept by the server as a
 * per-step histogram of whole minutes, and read back as its median once enough records have it.
 */
import type { ReasoningStep } from '../../types/verdicts'

/**
 * Minutes assumed for a step with neither records nor an author's estimate: a meter check on a
 * unit already open takes a few minutes (probes, range, reading, noting it).
 */
export const DEFAULT_STEP_MINUTES = 5

/** Records that must have timed a step before their median replaces the author's estimate. */
export const MIN_TIMED_RECORDS = 5

/**
 * A gap between readings longer than this is a pause (the job set aside, a part on order), not
 * the step's work, and is not recorded for the step.
 */
export const LONGEST_STEP_GAP_MINUTES = 120

/** An instant: an ISO 8601 string, milliseconds since the epoch, or a Date. */
export type Moment = string | number | Date

function millis(at: Moment, what: string): number {
  const ms = at instanceof Date ? at.getTime() : typeof at === 'number' ? at : Date.parse(at)
  if (!Number.isFinite(ms)) throw new RangeError(`${what} is not a valid time (${String(at)})`)
  return ms
}

/**
 * The minutes spent on each step of a record: the time from the previous reading (the first
 * from the record's start) to each reading, summed per step when a step was read more than once,
 * in whole minutes and at least 1 (a reading typed seconds after the last was still measured).
 * Gaps longer than LONGEST_STEP_GAP_MINUTES are left out. Throws RangeError on an invalid time.
 *
 * @example
 * minutesPerStep('2025-03-04T09:00:00Z', [
 *   { stepKey: 'capture', at: '2025-03-04T09:06:00Z' },
 *   { stepKey: 'bridge', at: '2025-03-04T09:10:20Z' },
 * ]) // → { capture: 6, bridge: 4 }
 */
export function minutesPerStep(startedAt: Moment, readings: ReadonlyArray<{ stepKey: string, at: Moment }>): Record<string, number> {
  let previous = millis(startedAt, 'the record\'s start')
  const timed = readings
    .map((r, i) => ({ stepKey: r.stepKey, at: millis(r.at, `reading ${i + 1} (${r.stepKey})`), i }))
    .sort((a, b) => a.at - b.at || a.i - b.i)
  const spent = new Map<string, number>()
  for (const r of timed) {
    const gap = Math.max(0, r.at - previous)
    previous = Math.max(previous, r.at)
    if (gap > LONGEST_STEP_GAP_MINUTES * 60_000) continue
    spent.set(r.stepKey, (spent.get(r.stepKey) ?? 0) + gap)
  }
  const out: Record<string, number> = {}
  for (const [stepKey, ms] of spent) out[stepKey] = Math.max(1, Math.round(ms / 60_000))
  return out
}

function histogramEntries(histogram: Readonly<Record<string, number>>): Array<[number, number]> {
  const entries: Array<[number, number]> = []
  for (const [key, count] of Object.entries(histogram)) {
    const value = Number(key)
    if (!Number.isFinite(value)) throw new RangeError(`histogram value "${key}" is not a number`)
    if (!Number.isFinite(count) || count < 0) throw new RangeError(`histogram count of ${key} must be ≥ 0 (got ${count})`)
    if (count > 0) entries.push([value, count])
  }
  return entries.sort((a, b) => a[0] - b[0])
}

/**
 * How many observations a histogram holds.
 *
 * @example
 * histogramTotal({ 3: 2, 5: 1 }) // 3
 */
export function histogramTotal(histogram: Readonly<Record<string, number>> | undefined): number {
  return histogram ? histogramEntries(histogram).reduce((sum, [, n]) => sum + n, 0) : 0
}

/**
 * The median of the values a histogram counts (value → how many times), as if they were listed
 * one by one: the middle value, or the mean of the two middle values for an even count (the
 * usual definition, as numpy.median). Null when the histogram is empty. Counts should be whole.
 *
 * @example
 * medianOfHistogram({ 3: 2, 5: 1, 12: 1 }) // 4   (3, 3, 5, 12)
 */
export function medianOfHistogram(histogram: Readonly<Record<string, number>>): number | null {
  const entries = histogramEntries(histogram)
  const total = entries.reduce((sum, [, n]) => sum + n, 0)
  if (total === 0) return null
  // The k-th value in order (1-based), walking the cumulative counts.
  const nth = (k: number): number => {
    let seen = 0
    for (const [value, n] of entries) {
      seen += n
      if (seen >= k) return value
    }
    return entries[entries.length - 1]![0]
  }
  if (total % 2 === 1) return nth((total + 1) / 2)
  return (nth(total / 2) + nth(total / 2 + 1)) / 2
}

export type MinutesSource = 'records' | 'author' | 'default'

/**
 * The expected minutes of a step: the median recorded time once MIN_TIMED_RECORDS records have
 * it, else the author's `minutes`, else DEFAULT_STEP_MINUTES.
 *
 * @example
 * expectedStepMinutes({ minutes: 3 }, { 4: 6 }) // { minutes: 4, from: 'records' }
 * expectedStepMinutes({ minutes: 3 }, { 4: 2 }) // { minutes: 3, from: 'author' }
 */
export function expectedStepMinutes(step: Pick<ReasoningStep, 'minutes'>, histogram?: Readonly<Record<string, number>>): { minutes: number, from: MinutesSource } {
  if (histogram && histogramTotal(histogram) >= MIN_TIMED_RECORDS) {
    const median = medianOfHistogram(histogram)
    if (median !== null && median > 0) return { minutes: median, from: 'records' }
  }
  if (step.minutes !== undefined && Number.isFinite(step.minutes) && step.minutes > 0) return { minutes: step.minutes, from: 'author' }
  return { minutes: DEFAULT_STEP_MINUTES, from: 'default' }
}
