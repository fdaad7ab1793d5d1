// What the invented demo records read at each step: readings whose verdicts agree with the cause
// each record confirms, so the likelihoods learned from them mean something on first start.
import type { StoredStep } from '../../server/db/models/repair-record'
import { ESCALATE, isPassingVerdict, possibleVerdicts, verdictsOf } from '../../shared/types/verdicts'
import type { ReasoningStep, StepVerdict } from '../../shared/types/verdicts'
import { DEFAULT_STEP_MINUTES, flowEdges, followFlow, isFlow } from '../../shared/utils/diagnosis'

type Step = ReasoningStep & { measurement?: ReasoningStep['measurement'] & { tolerancePct?: number } }

const number = (x: number) => String(+x.toPrecision(3))

/**
 * A typed reading that `evaluateReading` judges as `verdict` on this step, as a bench would
 * type it: a diode test's short reads 0.012 V and a good junction 0.55 V (REFERENCES "Multimeter
 * diode test", common practice), an open part `OL`, a check `pass` or `fail`.
 *
 * @example
 * readingFor({ key: 'q1', title: 'Q1', measurement: { quantity: 'diode_drop', unit: 'V', min: 0.4, max: 0.7 } }, 'low') // '0.012 V'
 */
export function readingFor(step: Step, verdict: StepVerdict): string {
  const m = step.measurement
  if (verdict === 'pass' || verdict === 'fail') return verdict
  if (!m || verdict === 'open') return 'OL'
  const spread = (m.tolerancePct ?? 0) / 100
  const lo = m.nominal !== undefined ? m.nominal * (1 - spread) : m.min
  const hi = m.nominal !== undefined ? m.nominal * (1 + spread) : m.max
  if (verdict === 'low') {
    if (m.quantity === 'diode_drop') return `0.012 ${m.unit}`
    return lo !== undefined && lo > 0 ? `${number(lo * 0.2)} ${m.unit}` : `0.3 ${m.unit}`
  }
  if (verdict === 'high') return `${number((hi ?? 1) * 1.9)} ${m.unit}`
  if (m.quantity === 'diode_drop' && (lo ?? 0) <= 0.55 && (hi ?? Infinity) >= 0.55) return `0.55 ${m.unit}`
  const mid = lo !== undefined && hi !== undefined ? (lo + hi) / 2 : lo !== undefined ? lo * 2 : (hi ?? 0) / 2
  return `${number(mid)} ${m.unit}`
}

/** The verdicts a step can give that pass it, in its verdict order. */
const passing = (step: Step) => possibleVerdicts(step).filter(v => isPassingVerdict(step, v))

/**
 * The path through a flow that ends in `target` (a cause key or `escalate`), as the verdict of
 * each step on it; null when no path of the flow concludes it.
 */
function routeTo(steps: ReadonlyArray<Step>, target: string): Record<string, StepVerdict> | null {
  const edges = flowEdges(steps)
  const walk = (at: string, seen: Set<string>): Record<string, StepVerdict> | null => {
    if (seen.has(at)) return null
    for (const e of edges.filter(x => x.from === at)) {
      if (e.to.kind === 'conclusion' && e.to.conclude === target) return { [at]: e.verdict }
      if (e.to.kind !== 'step') continue
      const rest = walk(e.to.stepKey, new Set([...seen, at]))
      if (rest) return { [at]: e.verdict, ...rest }
    }
    return null
  }
  return steps[0] ? walk(steps[0].key, new Set()) : null
}

/**
 * The verdict of each step a demo record reads, given the cause it confirms (null: no fault
 * found or a cause outside the procedure) and whether it was passed on. In a list of checks every
 * step is read: the failing verdict that names the cause where the step has one, a passing one
 * elsewhere. In a flow only the steps on the path to the cause's conclusion are read (to
 * `escalate` for a job passed on or with no fault found; the passing branches where neither is
 * concluded).
 *
 * @example
 * demoVerdicts(vr240.steps, 'q1_short', false) // { confirm: 'high', q1_ds: 'low', bridge: 'in_range', pot: 'in_range', gate_drive: 'pass' }
 */
export function demoVerdicts(steps: ReadonlyArray<Step>, cause: string | null, passedOn: boolean): Record<string, StepVerdict> {
  if (isFlow(steps)) {
    const route = (cause && routeTo(steps, cause)) ?? ((passedOn || !cause) && routeTo(steps, ESCALATE))
    if (route) return route
    const observed: Record<string, StepVerdict> = {}
    for (let at = followFlow(steps, observed).current; at !== null; at = followFlow(steps, observed).current) {
      observed[at] = passing(steps.find(s => s.key === at)!)[0]!
    }
    return observed
  }
  const out: Record<string, StepVerdict> = {}
  for (const step of steps) {
    const meanings = verdictsOf(step)
    const naming = possibleVerdicts(step).filter(v => !isPassingVerdict(step, v) && cause !== null && meanings[v]!.causes.includes(cause))
    out[step.key] = naming[0] ?? passing(step)[0]!
  }
  return out
}

/**
 * The steps of a demo record: each verdict typed as a reading, read one after the other from the
 * start of the job, each step taking about its author's minutes (0.6 to 1.4 times).
 */
export function demoSteps(steps: ReadonlyArray<Step>, verdicts: Record<string, StepVerdict>, startedAt: Date, rand: () => number): { steps: Record<string, StoredStep>, minutes: number } {
  const out: Record<string, StoredStep> = {}
  let at = startedAt.getTime()
  for (const step of steps) {
    const verdict = verdicts[step.key]
    if (!verdict) continue
    at += Math.max(1, Math.round((step.minutes ?? DEFAULT_STEP_MINUTES) * (0.6 + 0.8 * rand()))) * 60_000
    out[step.key] = { value: readingFor(step, verdict), note: '', done: true, verdict, readAt: new Date(at).toISOString() }
  }
  return { steps: out, minutes: Math.round((at - startedAt.getTime()) / 60_000) }
}
