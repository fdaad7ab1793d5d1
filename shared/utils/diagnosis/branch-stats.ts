/**
 * How a flow is used: per branch (step, verdict), how often records took it and how often the
 * cause it concludes was the one finally confirmed. For the dashboard, and for authors deciding
 * whether a branch earns its place.
 */
import { ESCALATE, verdictLabel } from '../../types/verdicts'
import type { ReasoningStep, StepVerdict } from '../../types/verdicts'
import { branchesTaken, flowEdges } from './flow'
import type { FlowTarget } from './flow'
import type { LearnedStats } from './stats'

type FlowStep = Pick<ReasoningStep, 'key' | 'measurement' | 'failPointsTo' | 'verdicts'>

/**
 * The branches on a record's flow path, each marked `confirmed` when it concludes the record's
 * confirmed cause (or `escalate`, and the record was escalated).
 *
 * @example
 * recordBranches(steps, { capture: 'fail', switch: 'in_range', bridge: 'low' }, 'bridge_shorted')
 * // → [{ stepKey: 'capture', verdict: 'fail', confirmed: false }, …, { stepKey: 'bridge', verdict: 'low', confirmed: true }]
 */
export function recordBranches(
  steps: ReadonlyArray<FlowStep>,
  verdicts: Readonly<Record<string, StepVerdict | null | undefined>>,
  confirmedCause: string | null,
  outcome?: string,
): Array<{ stepKey: string, verdict: StepVerdict, confirmed: boolean }> {
  return branchesTaken(steps, verdicts).map(b => ({
    stepKey: b.stepKey,
    verdict: b.verdict,
    confirmed: b.conclude === ESCALATE ? outcome === 'escalated' : b.conclude !== undefined && b.conclude === confirmedCause,
  }))
}

/**
 * Branch counts from whole records (each record's verdicts and confirmed cause key), in the
 * shape `LearnedStats.branches` keeps: for rebuilding the counts, or without stored counts.
 *
 * @example
 * branchStatistics(steps, branchCounts(steps, [{ verdicts: { capture: 'pass' }, confirmedCause: null, outcome: 'escalated' }]))
 */
export function branchCounts(
  steps: ReadonlyArray<FlowStep>,
  records: ReadonlyArray<{ verdicts: Readonly<Record<string, StepVerdict | null | undefined>>, confirmedCause: string | null, outcome?: string }>,
): LearnedStats['branches'] {
  const out: LearnedStats['branches'] = {}
  for (const r of records) {
    for (const b of recordBranches(steps, r.verdicts, r.confirmedCause, r.outcome)) {
      const branch = ((out[b.stepKey] ??= {})[b.verdict] ??= { taken: 0, confirmed: 0 })
      branch.taken += 1
      if (b.confirmed) branch.confirmed += 1
    }
  }
  return out
}

export interface BranchStatistic {
  stepKey: string
  verdict: StepVerdict
  /** `low`, `OL`, `in range`… */
  label: string
  to: FlowTarget
  /** Records whose path took this branch. */
  taken: number
  /** Records whose path read this step with any verdict. */
  reached: number
  /** taken / reached, or null when no record reached the step. */
  share: number | null
  /** The cause key (or `escalate`) the branch concludes, or null. */
  concludes: string | null
  /** Of the records that took a concluding branch, how many confirmed its conclusion; null for other branches. */
  confirmed: number | null
  /** confirmed / taken, or null. */
  confirmedShare: number | null
}

/**
 * Every branch of the flow with its use, in step and verdict order (branches never taken
 * included, with 0).
 *
 * @example
 * branchStatistics(steps, stats.branches).filter(b => b.concludes)
 * // → [{ stepKey: 'bridge', verdict: 'low', taken: 14, reached: 20, share: 0.7, concludes: 'bridge_shorted', confirmed: 13, confirmedShare: 0.93 }, …]
 */
export function branchStatistics(steps: ReadonlyArray<FlowStep>, branches: LearnedStats['branches']): BranchStatistic[] {
  const edges = flowEdges(steps)
  const reached = new Map<string, number>()
  for (const e of edges) reached.set(e.from, (reached.get(e.from) ?? 0) + (branches[e.from]?.[e.verdict]?.taken ?? 0))
  return edges.map((e) => {
    const counts = branches[e.from]?.[e.verdict] ?? { taken: 0, confirmed: 0 }
    const atStep = reached.get(e.from) ?? 0
    const concludes = e.to.kind === 'conclusion' ? e.to.conclude : null
    const confirmed = concludes === null ? null : counts.confirmed
    return {
      stepKey: e.from,
      verdict: e.verdict,
      label: verdictLabel(e.verdict),
      to: e.to,
      taken: counts.taken,
      reached: atStep,
      share: atStep > 0 ? counts.taken / atStep : null,
      concludes,
      confirmed,
      confirmedShare: confirmed !== null && counts.taken > 0 ? confirmed / counts.taken : null,
    }
  })
}
