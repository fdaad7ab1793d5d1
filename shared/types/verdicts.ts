import { z } from 'zod'
import type { MeasurementSpec } from './measurement'

/**
 * What each verdict of a step means: the causes it points to and, in a branching procedure,
 * where it leads. A measured step reads `in_range`, `low`, `high` or `open`; a step without a
 * measurement (look, listen, capture and compare) passes or fails.
 */
export const MEASURED_VERDICTS = ['in_range', 'low', 'high', 'open'] as const
export const CHECK_VERDICTS = ['pass', 'fail'] as const
export const STEP_VERDICTS = [...MEASURED_VERDICTS, ...CHECK_VERDICTS] as const
export type MeasuredVerdict = (typeof MEASURED_VERDICTS)[number]
export type CheckVerdict = (typeof CHECK_VERDICTS)[number]
export type StepVerdict = (typeof STEP_VERDICTS)[number]

/** A conclusion that names no cause: the job goes to someone with more tools or rights. */
export const ESCALATE = 'escalate'

/** An author's time estimate may not exceed a working day. */
export const MAX_STEP_MINUTES = 480

// The same shape as the procedure's cause and step keys.
const KEY_PATTERN = /^[a-z0-9][a-z0-9_-]*$/
const key = z.string().trim().min(1).max(40).regex(KEY_PATTERN, 'must be a short key (a-z, 0-9, _ or -)')

/** One verdict's meaning: the causes it points to, and in a flow the step it leads to or what it concludes. */
export const VerdictEntry = z.strictObject({
  causes: z.array(key).max(20).optional(),
  next: key.optional(),
  /** A cause key, or `escalate`. */
  conclude: key.optional(),
})
export type VerdictEntry = z.infer<typeof VerdictEntry>

/** The per-verdict map of a step. Which verdicts a step can give is checked by `flowIssues`. */
export const VerdictMap = z.strictObject({
  in_range: VerdictEntry.optional(),
  low: VerdictEntry.optional(),
  high: VerdictEntry.optional(),
  open: VerdictEntry.optional(),
  pass: VerdictEntry.optional(),
  fail: VerdictEntry.optional(),
})
export type VerdictMap = z.infer<typeof VerdictMap>

/** The author's estimate of a step's minutes, used until enough records time it. */
export const StepMinutes = z.number().finite()
  .gt(0, 'minutes must be above 0')
  .max(MAX_STEP_MINUTES, `minutes must be at most ${MAX_STEP_MINUTES}`)

/**
 * The step fields of reasoning, for `StepContent.extend(StepReasoningFields)`.
 *
 * @example
 * const Step = StepContent.extend(StepReasoningFields)
 * Step.parse({ key: 'bridge', title: 'Diode-test the bridge', instruction: '…',
 *   measurement: { quantity: 'diode_drop', unit: 'V', min: 0.4, max: 0.9 },
 *   verdicts: { low: { causes: ['bridge_shorted'] }, open: { causes: ['bridge_open'] } }, minutes: 4 })
 */
export const StepReasoningFields = {
  verdicts: VerdictMap.optional(),
  minutes: StepMinutes.optional(),
}

const loose = z.string().trim().max(40)
const DraftVerdictEntry = z.object({
  causes: z.array(loose).max(20).optional(),
  next: loose.optional(),
  conclude: loose.optional(),
})

/**
 * The same fields for a draft: sizes only, unknown verdicts dropped, so that autosave never
 * refuses half-finished work. `DraftContent.shape.steps.element.extend(DraftStepReasoningFields)`.
 */
export const DraftStepReasoningFields = {
  verdicts: z.object({
    in_range: DraftVerdictEntry.optional(),
    low: DraftVerdictEntry.optional(),
    high: DraftVerdictEntry.optional(),
    open: DraftVerdictEntry.optional(),
    pass: DraftVerdictEntry.optional(),
    fail: DraftVerdictEntry.optional(),
  }).optional(),
  minutes: z.number().finite().min(0).max(MAX_STEP_MINUTES).optional(),
}

/** The parts of a procedure step that reasoning reads (a published step satisfies it). */
export interface ReasoningStep {
  key: string
  title: string
  measurement?: MeasurementSpec
  /** Shorthand: the causes every failing verdict points to, unless the verdict names its own. */
  failPointsTo?: string[]
  verdicts?: VerdictMap
  minutes?: number
}

/** The parts of a procedure cause that reasoning reads. */
export interface ReasoningCause {
  key: string
  name: string
  /** The author's prior weight, in (0, 1]. */
  prior?: number
}

/** A verdict's meaning after normalisation: always a cause list, with its pass or fail. */
export interface VerdictMeaning {
  verdict: StepVerdict
  /** The reading passes the step (in range, or open where open is expected, or a passed check). */
  passing: boolean
  /** Cause keys the verdict points to, each once; a concluded cause is among them. */
  causes: string[]
  next?: string
  conclude?: string
  /** The author wrote an entry for this verdict (or the shorthand covers it). */
  declared: boolean
}

type WindowSpec = Pick<MeasurementSpec, 'min' | 'max' | 'nominal' | 'openExpected'>

/**
 * The verdicts a step can give, in display order. A measured step gives `low` only with a lower
 * limit (or no window at all, where every finite reading is `low`), `high` only with an upper
 * limit, `in_range` only with a window, and `open` always. A step without a measurement passes
 * or fails.
 *
 * @example
 * possibleVerdicts({ measurement: { quantity: 'diode_drop', unit: 'V', min: 0.05 } }) // ['in_range', 'low', 'open']
 */
export function possibleVerdicts(step: { measurement?: WindowSpec }): StepVerdict[] {
  const m = step.measurement
  if (!m) return [...CHECK_VERDICTS]
  const hasMin = m.min !== undefined || m.nominal !== undefined
  const hasMax = m.max !== undefined || m.nominal !== undefined
  const out: StepVerdict[] = []
  if (hasMin || hasMax) out.push('in_range')
  if (hasMin || !hasMax) out.push('low')
  if (hasMax) out.push('high')
  out.push('open')
  return out
}

/**
 * Whether a verdict passes the step, by the rules of `evaluateReading`.
 *
 * @example
 * isPassingVerdict({ measurement: { quantity: 'resistance', unit: 'Ω', openExpected: true } }, 'open') // true
 */
export function isPassingVerdict(step: { measurement?: WindowSpec }, verdict: StepVerdict): boolean {
  if (verdict === 'pass' || verdict === 'in_range') return true
  return verdict === 'open' && step.measurement?.openExpected === true
}

/**
 * The step's verdict map in full: one entry per verdict the step can give, with the
 * `failPointsTo` shorthand spread over every failing verdict that names no causes of its own (an
 * explicit `causes: []` says "no cause"). A concluded cause counts among the verdict's causes.
 * Entries for verdicts the step cannot give are left out (`flowIssues` reports them).
 *
 * @example
 * verdictsOf({ key: 'd1', title: 'D1 forward', failPointsTo: ['d1_failed'],
 *   measurement: { quantity: 'diode_drop', unit: 'V', min: 0.4, max: 0.9 },
 *   verdicts: { low: { causes: ['d1_shorted'] } } })
 * // → { in_range: { causes: [], passing: true, … }, low: { causes: ['d1_shorted'], … },
 * //     high: { causes: ['d1_failed'], … }, open: { causes: ['d1_failed'], … } }
 */
export function verdictsOf(step: Pick<ReasoningStep, 'measurement' | 'failPointsTo' | 'verdicts'>): Partial<Record<StepVerdict, VerdictMeaning>> {
  const out: Partial<Record<StepVerdict, VerdictMeaning>> = {}
  const shorthand = step.failPointsTo ?? []
  for (const verdict of possibleVerdicts(step)) {
    const entry = step.verdicts?.[verdict]
    const passing = isPassingVerdict(step, verdict)
    const causes = entry?.causes ?? (passing ? [] : shorthand)
    const all = entry?.conclude !== undefined && entry.conclude !== ESCALATE ? [...causes, entry.conclude] : causes
    const meaning: VerdictMeaning = {
      verdict,
      passing,
      causes: [...new Set(all)],
      declared: entry !== undefined || (!passing && shorthand.length > 0),
    }
    if (entry?.next !== undefined) meaning.next = entry.next
    if (entry?.conclude !== undefined) meaning.conclude = entry.conclude
    out[verdict] = meaning
  }
  return out
}

/** A verdict map as a draft or a complete revision holds it. */
type LooseVerdictMap = Partial<Record<StepVerdict, { causes?: string[], next?: string, conclude?: string } | undefined>>

/**
 * The step with the `failPointsTo` shorthand written out in its verdict map: every failing
 * verdict the step can give that names no causes of its own takes the shorthand's causes, and
 * the shorthand goes. `verdictsOf` reads the same meaning before and after, so stored content
 * can carry the map alone. A step without the shorthand comes back unchanged.
 *
 * @example
 * foldFailPointsTo({ key: 'd1', title: 'D1', failPointsTo: ['d1_failed'],
 *   measurement: { quantity: 'diode_drop', unit: 'V', min: 0.4, max: 0.9 }, verdicts: { low: { causes: ['d1_shorted'] } } })
 * // → { key: 'd1', title: 'D1', measurement: …, verdicts: { low: { causes: ['d1_shorted'] },
 * //     high: { causes: ['d1_failed'] }, open: { causes: ['d1_failed'] } } }
 */
export function foldFailPointsTo<S extends { measurement?: WindowSpec, failPointsTo?: string[], verdicts?: LooseVerdictMap }>(step: S): S {
  if (!('failPointsTo' in step)) return step
  const { failPointsTo, ...rest } = step
  const out = rest as S
  if (!failPointsTo?.length) return out
  const verdicts: LooseVerdictMap = { ...step.verdicts }
  for (const verdict of possibleVerdicts(step)) {
    if (isPassingVerdict(step, verdict) || verdicts[verdict]?.causes !== undefined) continue
    verdicts[verdict] = { ...verdicts[verdict], causes: [...new Set(failPointsTo)] }
  }
  out.verdicts = verdicts as S['verdicts']
  return out
}

/**
 * The cause keys a verdict of the step points to ([] for a verdict the step cannot give).
 *
 * @example
 * verdictCauses(step, 'low') // ['bridge_shorted'], what `evaluateReading`'s `raises` becomes per verdict
 */
export function verdictCauses(step: Pick<ReasoningStep, 'measurement' | 'failPointsTo' | 'verdicts'>, verdict: StepVerdict): string[] {
  return verdictsOf(step)[verdict]?.causes ?? []
}

const VERDICT_LABELS: Record<StepVerdict, string> = {
  in_range: 'in range',
  low: 'low',
  high: 'high',
  open: 'OL',
  pass: 'pass',
  fail: 'fail',
}

/**
 * A verdict's short label, for edges and chips: `in range`, `low`, `high`, `OL`, `pass`, `fail`.
 *
 * @example
 * verdictLabel('open') // 'OL'
 */
export function verdictLabel(verdict: StepVerdict): string {
  return VERDICT_LABELS[verdict]
}

/**
 * The condition in words: `if it reads low`, `if it reads OL`, `if it passes`, `if it fails`.
 *
 * @example
 * verdictCondition('in_range') // 'if it reads in range'
 */
export function verdictCondition(verdict: StepVerdict): string {
  if (verdict === 'pass') return 'if it passes'
  if (verdict === 'fail') return 'if it fails'
  return `if it reads ${VERDICT_LABELS[verdict]}`
}

/**
 * Each declared verdict of a step in words, for review and for the bench card, in the step's
 * verdict order. Unknown keys are shown as typed, so a reviewer sees the slip.
 *
 * @example
 * describeVerdicts(step, causes, steps)
 * // → ['if it reads low: bridge diode shorted', 'if it reads in range: go to “Check the thermal fuse”',
 * //    'if it reads OL: concludes bridge diode open']
 */
export function describeVerdicts(
  step: Pick<ReasoningStep, 'measurement' | 'failPointsTo' | 'verdicts'>,
  causes: ReadonlyArray<Pick<ReasoningCause, 'key' | 'name'>>,
  steps: ReadonlyArray<Pick<ReasoningStep, 'key' | 'title'>> = [],
): string[] {
  const causeName = new Map(causes.map(c => [c.key, c.name]))
  const stepTitle = new Map(steps.map(s => [s.key, s.title]))
  const lines: string[] = []
  for (const meaning of Object.values(verdictsOf(step))) {
    if (!meaning.declared) continue
    const parts: string[] = []
    const pointed = meaning.causes.filter(c => c !== meaning.conclude).map(c => causeName.get(c) ?? c)
    if (pointed.length > 0) parts.push(pointed.join(' or '))
    if (meaning.conclude === ESCALATE) parts.push('escalate')
    else if (meaning.conclude !== undefined) parts.push(`concludes ${causeName.get(meaning.conclude) ?? meaning.conclude}`)
    if (meaning.next !== undefined) parts.push(`go to “${stepTitle.get(meaning.next) ?? meaning.next}”`)
    if (parts.length === 0) parts.push('no cause')
    lines.push(`${verdictCondition(meaning.verdict)}: ${parts.join('; ')}`)
  }
  return lines
}
