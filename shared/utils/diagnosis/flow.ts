/**
 * Branching procedures. A verdict may send the technician to a step (`next`) or conclude a
 * cause (`conclude`, or `escalate`). A procedure where no verdict does either is not a flow: its
 * steps may be done in any order (suggested by the p/c rule). Once one verdict does, the
 * procedure is a flow: it starts at its first step, and a verdict with neither goes on to the
 * following step.
 */
import { possibleVerdicts, verdictsOf } from '../../types/verdicts'
import type { ReasoningStep, StepVerdict, VerdictMeaning } from '../../types/verdicts'
import type { Posterior } from './posterior'
import { formatProbability } from './posterior'

type FlowStep = Pick<ReasoningStep, 'key' | 'measurement' | 'failPointsTo' | 'verdicts'>

export type FlowTarget
  = | { kind: 'step', stepKey: string }
    | { kind: 'conclusion', conclude: string }
    /** Past the last step with no conclusion. */
    | { kind: 'end' }

/** Where one verdict of one step leads. `explicit` when the author wrote `next` or `conclude`. */
export interface FlowEdge {
  from: string
  verdict: StepVerdict
  to: FlowTarget
  explicit: boolean
}

/**
 * Whether the procedure branches: some verdict of some step carries `next` or `conclude`.
 *
 * @example
 * isFlow(content.steps) // false for a plain list of checks
 */
export function isFlow(steps: ReadonlyArray<Pick<ReasoningStep, 'verdicts'>>): boolean {
  return steps.some(s => Object.values(s.verdicts ?? {}).some(e => e?.next !== undefined || e?.conclude !== undefined))
}

/**
 * Every verdict of every step with where it leads, in step and verdict order. A `next` naming
 * no step is kept as written (`flowIssues` reports it).
 *
 * @example
 * flowEdges(steps)[0] // { from: 'capture', verdict: 'pass', to: { kind: 'conclusion', conclude: 'escalate' }, explicit: true }
 */
export function flowEdges(steps: ReadonlyArray<FlowStep>): FlowEdge[] {
  const edges: FlowEdge[] = []
  steps.forEach((step, i) => {
    const meanings = verdictsOf(step)
    for (const verdict of possibleVerdicts(step)) {
      const m = meanings[verdict]!
      const following = steps[i + 1]
      let to: FlowTarget
      if (m.conclude !== undefined) to = { kind: 'conclusion', conclude: m.conclude }
      else if (m.next !== undefined) to = { kind: 'step', stepKey: m.next }
      else to = following ? { kind: 'step', stepKey: following.key } : { kind: 'end' }
      edges.push({ from: step.key, verdict, to, explicit: m.conclude !== undefined || m.next !== undefined })
    }
  })
  return edges
}

/**
 * The steps reachable from `start` (itself included) along any verdict.
 *
 * @example
 * reachableSteps(steps, 'bridge') // Set { 'bridge', 'fuse' }
 */
export function reachableSteps(steps: ReadonlyArray<FlowStep>, start: string, edges: FlowEdge[] = flowEdges(steps)): Set<string> {
  const out = new Map<string, string[]>()
  for (const e of edges) if (e.to.kind === 'step') (out.get(e.from) ?? out.set(e.from, []).get(e.from)!).push(e.to.stepKey)
  const known = new Set(steps.map(s => s.key))
  const seen = new Set<string>()
  const queue = known.has(start) ? [start] : []
  while (queue.length > 0) {
    const key = queue.shift()!
    if (seen.has(key)) continue
    seen.add(key)
    for (const next of out.get(key) ?? []) if (known.has(next) && !seen.has(next)) queue.push(next)
  }
  return seen
}

export interface FlowPosition {
  isFlow: boolean
  /** Step keys taken, in order, from the first step. */
  path: string[]
  /** The verdicts on the path, with the conclusion each reached. */
  taken: Array<{ stepKey: string, verdict: StepVerdict, conclude?: string }>
  /** The cause key (or `escalate`) the flow concluded, or null. */
  concluded: string | null
  /** The path ran past the last step without a conclusion (or, in a draft, into a loop or an unknown step). */
  ended: boolean
  /** The step the flow leads to now: the first step at the start, then the target of the last verdict; null once concluded or ended. */
  current: string | null
  /** Steps that this walk can no longer reach (shown greyed, still openable; their readings still count as evidence). */
  offPath: string[]
}

/**
 * Where the flow stands given the verdicts so far: walk from the first step, following each
 * read step's verdict, until a step not yet read (the current step), a conclusion, or the end.
 * For a procedure that is not a flow the answer is empty: no path, no current step, nothing off
 * the path.
 *
 * @example
 * followFlow(steps, { capture: 'fail', switch: 'in_range', bridge: 'low' })
 * // → { isFlow: true, path: ['capture', 'switch', 'bridge'], concluded: 'bridge_shorted', current: null, offPath: ['fuse'], … }
 */
export function followFlow(steps: ReadonlyArray<FlowStep>, observed: Readonly<Record<string, StepVerdict | null | undefined>>): FlowPosition {
  const position: FlowPosition = { isFlow: isFlow(steps), path: [], taken: [], concluded: null, ended: false, current: null, offPath: [] }
  if (!position.isFlow || steps.length === 0) return position
  const index = new Map<string, number>()
  steps.forEach((s, i) => {
    if (!index.has(s.key)) index.set(s.key, i)
  })
  let at: string | undefined = steps[0]!.key
  while (at !== undefined) {
    if (position.path.includes(at) || !index.has(at)) {
      position.ended = true
      break
    }
    const i: number = index.get(at)!
    position.path.push(at)
    const verdict: StepVerdict | null | undefined = observed[at]
    const meaning: VerdictMeaning | undefined = verdict ? verdictsOf(steps[i]!)[verdict] : undefined
    if (!verdict || !meaning) {
      position.current = at
      break
    }
    position.taken.push(meaning.conclude === undefined ? { stepKey: at, verdict } : { stepKey: at, verdict, conclude: meaning.conclude })
    if (meaning.conclude !== undefined) {
      position.concluded = meaning.conclude
      break
    }
    at = meaning.next ?? steps[i + 1]?.key
    if (at === undefined) position.ended = true
  }
  const stillOpen = position.current === null ? new Set<string>() : reachableSteps(steps, position.current)
  position.offPath = steps.map(s => s.key).filter(k => !position.path.includes(k) && !stillOpen.has(k))
  return position
}

/**
 * The branches (step, verdict) a record's verdicts take along its flow path, each with its
 * conclusion if it reached one. Empty for a procedure that is not a flow.
 *
 * @example
 * branchesTaken(steps, { capture: 'pass' }) // [{ stepKey: 'capture', verdict: 'pass', conclude: 'escalate' }]
 */
export function branchesTaken(steps: ReadonlyArray<FlowStep>, observed: Readonly<Record<string, StepVerdict | null | undefined>>): FlowPosition['taken'] {
  return followFlow(steps, observed).taken
}

/**
 * Below this probability a concluded cause is in strong disagreement with the readings and the
 * records: they give it less than one chance in ten, odds of 9 to 1 against what the flow says.
 */
export const CONCLUSION_DOUBT_BELOW = 0.1

export interface ConclusionWarning {
  cause: string
  name: string
  probability: number
  /** The most probable cause instead, when it is not the concluded one. */
  favoured: { key: string, name: string, probability: number } | null
  message: string
}

/**
 * A warning when the flow concludes a cause that the readings and records make unlikely
 * (probability below `threshold`, default CONCLUSION_DOUBT_BELOW). Null for no conclusion,
 * `escalate`, or a cause the probabilities do not know.
 *
 * @example
 * conclusionWarning(position.concluded, posterior)?.message
 * // 'The flow concludes “Thermal fuse open”, but the readings and records give it 4 %; they favour
 * //  “Bridge diode shorted” (81 %). Check the readings before confirming.'
 */
export function conclusionWarning(
  concluded: string | null,
  posterior: Pick<Posterior, 'causes' | 'probabilities'>,
  threshold = CONCLUSION_DOUBT_BELOW,
): ConclusionWarning | null {
  if (concluded === null) return null
  const cause = posterior.causes.find(c => c.key === concluded && !c.unlisted)
  if (!cause || cause.probability >= threshold) return null
  const top = posterior.causes[0]
  const favoured = top && top.key !== cause.key ? { key: top.key, name: top.name, probability: top.probability } : null
  const instead = favoured ? `; they favour “${favoured.name}” (${formatProbability(favoured.probability)})` : ''
  return {
    cause: cause.key,
    name: cause.name,
    probability: cause.probability,
    favoured,
    message: `The flow concludes “${cause.name}”, but the readings and records give it ${formatProbability(cause.probability)}${instead}. Check the readings before confirming.`,
  }
}
