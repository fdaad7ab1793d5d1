/**
 * Which untested step to do next. With one fault among several places, where inspecting place i
 * costs cᵢ and finds the fault with probability pᵢ, inspecting in decreasing pᵢ/cᵢ minimises the
 * expected cost (Kadane & Simon, Annals of Statistics 5(2), 1977); Heckerman, Breese & Rommelse
 * (Communications of the ACM 38(3), 1995) use the rule for troubleshooting. It is exact when each
 * cause is revealed by one step; where steps share causes it is the usual myopic approximation,
 * recomputed after every reading.
 */
import { isPassingVerdict, verdictsOf } from '../../types/verdicts'
import type { ReasoningStep, StepVerdict } from '../../types/verdicts'
import type { LearnedStats } from './stats'
import { expectedStepMinutes } from './minutes'
import type { MinutesSource } from './minutes'

export interface StepSuggestion {
  stepKey: string
  title: string
  /** Expected minutes (c). */
  minutes: number
  minutesFrom: MinutesSource
  /** The chance the step finds the fault (p): the summed probability of the causes its failing verdicts point to. */
  findsFault: number
  /** p / c, the order key. */
  perMinute: number
}

export interface OrderStepsInput {
  steps: ReadonlyArray<ReasoningStep>
  /** Current probability of each cause (e.g. `causeProbabilities(...).probabilities`). */
  probabilities: Readonly<Record<string, number>>
  /** Steps already read are left out. */
  observed?: Readonly<Record<string, StepVerdict | null | undefined>>
  stats?: Pick<LearnedStats, 'minutes'>
}

/**
 * The causes a step can find: those its failing verdicts point to, each once.
 *
 * @example
 * causesFoundBy({ failPointsTo: ['open_reg'], measurement: rail }) // ['open_reg']
 */
export function causesFoundBy(step: Pick<ReasoningStep, 'measurement' | 'failPointsTo' | 'verdicts'>): string[] {
  const found = new Set<string>()
  for (const meaning of Object.values(verdictsOf(step))) {
    if (!isPassingVerdict(step, meaning.verdict)) meaning.causes.forEach(c => found.add(c))
  }
  return [...found]
}

/**
 * The untested steps, the one that pays most first: decreasing findsFault / minutes (the p/c
 * rule), ties in the procedure's order. Steps that can find nothing come last, in order.
 *
 * @example
 * orderSteps({ steps, probabilities: posterior.probabilities, observed, stats })
 * // → [{ stepKey: 'bridge', title: 'Diode-test each bridge diode', minutes: 4, findsFault: 0.52, … }, …]
 */
export function orderSteps(input: OrderStepsInput): StepSuggestion[] {
  const observed = input.observed ?? {}
  const suggestions = input.steps
    .filter(step => observed[step.key] === undefined || observed[step.key] === null)
    .map((step, order) => {
      const { minutes, from } = expectedStepMinutes(step, input.stats?.minutes[step.key])
      const findsFault = causesFoundBy(step).reduce((sum, c) => sum + (input.probabilities[c] ?? 0), 0)
      const suggestion: StepSuggestion = { stepKey: step.key, title: step.title, minutes, minutesFrom: from, findsFault, perMinute: findsFault / minutes }
      return { suggestion, order }
    })
  suggestions.sort((a, b) => b.suggestion.perMinute - a.suggestion.perMinute || a.order - b.order)
  return suggestions.map(s => s.suggestion)
}
