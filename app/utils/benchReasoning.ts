import type { RevisionContent } from '#shared/types/procedure'
import type { RecordReasoningDto } from '#shared/types/records'
import { ESCALATE } from '#shared/types/verdicts'
import type { StepVerdict } from '#shared/types/verdicts'
import { causeProbabilities, describeChange, formatProbability } from '#shared/utils/diagnosis/posterior'
import type { Posterior, ProbabilityChange } from '#shared/utils/diagnosis/posterior'
import { conclusionWarning, followFlow } from '#shared/utils/diagnosis/flow'
import type { FlowPosition } from '#shared/utils/diagnosis/flow'
import { orderSteps } from '#shared/utils/diagnosis/next-step'
import type { StepSuggestion } from '#shared/utils/diagnosis/next-step'
import type { StepReading } from './benchWork'
import { verdictsOfReadings } from './benchWork'

// What the bench reasons from the readings so far, in the browser, with the same pure functions
// and the same inputs (the record's `reasoning`) as the server: one probability per cause, what
// the last reading changed, the step worth doing next, and where a branching procedure stands.

type Content = Pick<RevisionContent, 'steps' | 'causes'>

/** A reading that points to a cause, as the causes panel names it. */
export interface PointingReading {
  stepKey: string
  stepNumber: number
  stepTitle: string
  display: string
  verdict: StepVerdict
}

export interface BenchCause {
  key: string
  /** `procedureSlug:causeKey`, the form the close form confirms; null for "not listed". */
  id: string | null
  label: string
  probability: number
  unlisted: boolean
  /** The readings whose verdict points to this cause. */
  pointedBy: PointingReading[]
}

export interface BenchReasoning {
  /** Every cause of the procedure and "a cause not listed here", most probable first. */
  causes: BenchCause[]
  /** Cause key → probability (the unlisted share under its own key). */
  probabilities: Record<string, number>
  flow: FlowPosition
  /** The step most worth doing next (in a flow, the step it leads to), or null. */
  next: (StepSuggestion & { stepNumber: number }) | null
  /** What the last reading changed: `BR1 shorted 17 % → 64 %`. */
  change: { stepKey: string, stepNumber: number, lines: ProbabilityChange[] } | null
  /** The cause the flow concludes (or `escalate`), with the close form's id. */
  concluded: { key: string, label: string, id: string | null } | null
  /** Said when the flow's conclusion disagrees strongly with the probabilities. */
  warning: string | null
}

export interface ReasoningInput {
  procedureSlug: string
  content: Content
  reasoning: RecordReasoningDto | null | undefined
  readings: Record<string, StepReading>
  /** Steps marked done without a verdict: not suggested again. */
  done?: Record<string, boolean>
  /** The step read last, whose change is described. */
  lastStep?: string | null
}

function posteriorOf(input: ReasoningInput, observed: Record<string, StepVerdict>): Posterior {
  const r = input.reasoning
  return causeProbabilities({
    causes: input.content.causes,
    steps: input.content.steps,
    observed,
    ...(r ? { priors: r.priors, stats: r.stats, unlistedPrior: r.unlistedPrior } : {}),
  })
}

const capitalise = (text: string) => text.charAt(0).toUpperCase() + text.slice(1)

/**
 * The bench's reasoning over a record's readings.
 *
 * @example
 * const r = reasonAbout({ procedureSlug, content: record.guide.content, reasoning: record.reasoning, readings, lastStep: 'bridge' })
 * r.causes[0] // { label: 'Bridge rectifier BR1 diode shorted', probability: 0.64, … }
 * r.change?.lines.map(l => l.text) // ['Bridge rectifier BR1 diode shorted 17 % → 64 %', …]
 */
export function reasonAbout(input: ReasoningInput): BenchReasoning {
  const { content, procedureSlug } = input
  const steps = content.steps
  const number = new Map(steps.map((s, i) => [s.key, i + 1]))
  const observed = verdictsOfReadings(input.readings)
  const posterior = posteriorOf(input, observed)

  const pointedBy: Record<string, PointingReading[]> = {}
  steps.forEach((step, i) => {
    const r = input.readings[step.key]
    if (r?.state !== 'judged' || r.pass) return
    for (const key of r.raises) (pointedBy[key] ??= []).push({ stepKey: step.key, stepNumber: i + 1, stepTitle: step.title, display: r.display, verdict: r.verdict })
  })
  const causes: BenchCause[] = posterior.causes.map(c => ({
    key: c.key,
    id: c.unlisted ? null : `${procedureSlug}:${c.key}`,
    label: capitalise(c.name),
    probability: c.probability,
    unlisted: c.unlisted,
    pointedBy: pointedBy[c.key] ?? [],
  }))

  const flow = followFlow(steps, observed)
  const stats = input.reasoning?.stats
  let next: BenchReasoning['next'] = null
  const candidates = flow.isFlow
    ? steps.filter(s => s.key === flow.current)
    : steps.filter(s => observed[s.key] === undefined && !input.done?.[s.key])
  const best = orderSteps({ steps: candidates, probabilities: posterior.probabilities, observed, ...(stats ? { stats } : {}) })[0]
  if (best) next = { ...best, stepNumber: number.get(best.stepKey)! }

  let change: BenchReasoning['change'] = null
  const last = input.lastStep
  if (last && observed[last] !== undefined) {
    const { [last]: _, ...without } = observed
    const lines = describeChange(posteriorOf(input, without), posterior).map(l => ({ ...l, text: capitalise(l.text) }))
    change = { stepKey: last, stepNumber: number.get(last) ?? 0, lines }
  }

  let concluded: BenchReasoning['concluded'] = null
  if (flow.concluded === ESCALATE) concluded = { key: ESCALATE, label: 'Pass the job on', id: null }
  else if (flow.concluded !== null) {
    const cause = content.causes.find(c => c.key === flow.concluded)
    concluded = { key: flow.concluded, label: cause?.name ?? flow.concluded, id: cause ? `${procedureSlug}:${cause.key}` : null }
  }
  const warning = conclusionWarning(flow.concluded, posterior)?.message ?? null

  return { causes, probabilities: posterior.probabilities, flow, next, change, concluded, warning }
}

/** Minutes as the bench says them: whole, at least one. */
export const aboutMinutes = (minutes: number) => `about ${Math.max(1, Math.round(minutes))} min`

/**
 * The suggestion in one line: `Step 3, Diode-test BR1 · about 3 min · 64 % it finds the fault`.
 *
 * @example
 * suggestionText({ stepNumber: 3, title: 'Diode-test BR1', minutes: 3, findsFault: 0.64 })
 */
export function suggestionText(s: Pick<NonNullable<BenchReasoning['next']>, 'stepNumber' | 'title' | 'minutes' | 'findsFault'>): string {
  return `Step ${s.stepNumber}, ${s.title} · ${aboutMinutes(s.minutes)} · ${formatProbability(s.findsFault)} it finds the fault`
}
