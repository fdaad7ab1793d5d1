/**
 * Live cause probabilities at the bench: naive Bayes over the verdicts of the steps read so far.
 *
 *   P(c | device type, symptoms, verdicts) ∝ P(c) · Π_s P(v_s | s, c)
 *
 * P(c) comes from the evidence ranking (device type and symptoms), shared with an explicit
 * "cause not listed". P(v | s, c) is learned from closed records with Laplace smoothing, the
 * author's per-verdict declarations acting as pseudo-records. The same pure function runs in the
 * browser after every reading and on the server.
 */
import { DEFAULT_PRIOR_WEIGHT, normaliseLogScores } from '../evidence'
import { isPassingVerdict, possibleVerdicts, verdictsOf } from '../../types/verdicts'
import type { ReasoningCause, ReasoningStep, StepVerdict } from '../../types/verdicts'
import { UNLISTED_CAUSE } from './stats'
import type { LearnedStats } from './stats'

/**
 * How many records' worth of weight the author's word carries for each step and cause. Six
 * makes one failing reading a clear signal (on a four-verdict step the named verdict is 7/10
 * likely against 1/10, a likelihood ratio of 7) while twenty records that disagree outweigh it.
 */
export const AUTHOR_PSEUDO_RECORDS = 6

/**
 * The share of faults taken to lie outside a procedure's causes before any record says so: an
 * author's list is assumed to cover nine faults in ten. Records move it (see `unlistedPrior`).
 */
export const DEFAULT_UNLISTED_SHARE = 0.1

/** What the "cause not listed" entry is called on screen. */
export const UNLISTED_NAME = 'a cause not listed here'

export interface PosteriorInput {
  causes: ReadonlyArray<ReasoningCause>
  steps: ReadonlyArray<ReasoningStep>
  /**
   * Prior weight of each listed cause for this device type and symptoms, e.g. the posteriors of
   * `rankCauses`; normalised here. A cause missing gets the mean of the others; with none given,
   * the authors' priors stand in.
   */
  priors?: Readonly<Record<string, number>>
  /** The verdict of each step read so far (off-path readings of a flow count too). */
  observed?: Readonly<Record<string, StepVerdict | null | undefined>>
  /** Counts learned from closed records of this procedure. */
  stats?: Pick<LearnedStats, 'records' | 'unlisted' | 'verdicts'>
  /** P(cause not listed) before the readings; default `unlistedPrior(stats)`. In [0, 1). */
  unlistedPrior?: number
  /** Pseudo-records per step and cause for the author's declarations; default AUTHOR_PSEUDO_RECORDS. */
  authorWeight?: number
}

/** P(verdict | step, cause): `table[stepKey][causeKey][verdict]`, causes including UNLISTED_CAUSE. */
export type LikelihoodTable = Record<string, Record<string, Partial<Record<StepVerdict, number>>>>

export interface CauseProbability {
  key: string
  name: string
  probability: number
  /** The probability before any reading. */
  prior: number
  unlisted: boolean
}

export interface Posterior {
  /** Listed causes and "not listed", most probable first (ties in list order, "not listed" last). */
  causes: CauseProbability[]
  /** One number per cause key, UNLISTED_CAUSE included; they sum to 1. */
  probabilities: Record<string, number>
  /** Readings that entered the computation. */
  used: Array<{ stepKey: string, verdict: StepVerdict }>
  /** Readings left out, with the reason (a step not in the procedure, a verdict it cannot give). */
  ignored: Array<{ stepKey: string, verdict: string, reason: string }>
}

function assertCount(value: number, what: string): void {
  if (!Number.isFinite(value) || value < 0) throw new RangeError(`${what} must be a finite count ≥ 0 (got ${value})`)
}

/**
 * P(cause not listed) before any reading: the records of this procedure closed with a cause
 * outside its list, smoothed towards DEFAULT_UNLISTED_SHARE with DEFAULT_PRIOR_WEIGHT
 * pseudo-records (the weight the evidence ranking gives the authors' priors):
 * (unlisted + m·u₀) / (records + m).
 *
 * @example
 * unlistedPrior() // 0.1
 * unlistedPrior({ records: 45, unlisted: 0 }) // 0.01
 */
export function unlistedPrior(stats?: Pick<LearnedStats, 'records' | 'unlisted'>): number {
  if (!stats) return DEFAULT_UNLISTED_SHARE
  assertCount(stats.records, 'records')
  assertCount(stats.unlisted, 'unlisted records')
  if (stats.unlisted > stats.records) throw new RangeError(`${stats.unlisted} unlisted records out of ${stats.records}`)
  const m = DEFAULT_PRIOR_WEIGHT
  return (stats.unlisted + m * DEFAULT_UNLISTED_SHARE) / (stats.records + m)
}

/**
 * The likelihood of every verdict of every step under every cause:
 *
 *   P(v | s, c) = (n(s,v,c) + α(s,c,v) + 1) / (n(s,c) + Σ_v α(s,c,v) + k_s)
 *
 * k_s is the number of verdicts step s can give (`possibleVerdicts`), n(s,v,c) the closed
 * records of cause c whose step s read v, n(s,c) their sum over the step's verdicts (records
 * that skipped the step say nothing about it), and α the author's pseudo-records: A =
 * `authorWeight` shared evenly among the verdicts that name c (a concluded cause counts), or,
 * when no verdict of the step names c, among the step's passing verdicts (a fault elsewhere
 * leaves this part good). "Cause not listed" is named by no verdict. With A = 0 this is
 * Laplace's add-one rule.
 *
 * @example
 * const table = verdictLikelihoods({ causes, steps })
 * table['bridge']['bridge_shorted']['low'] // 0.7 on a four-verdict step with no records
 */
export function verdictLikelihoods(input: Pick<PosteriorInput, 'causes' | 'steps' | 'stats' | 'authorWeight'>): LikelihoodTable {
  const weight = input.authorWeight ?? AUTHOR_PSEUDO_RECORDS
  if (!Number.isFinite(weight) || weight < 0) throw new RangeError(`authorWeight must be ≥ 0 (got ${weight})`)
  const causeKeys = [...input.causes.map(c => c.key), UNLISTED_CAUSE]
  const table: LikelihoodTable = {}
  for (const step of input.steps) {
    const verdicts = possibleVerdicts(step)
    const meanings = verdictsOf(step)
    const passing = verdicts.filter(v => isPassingVerdict(step, v))
    const counts = input.stats?.verdicts[step.key] ?? {}
    const perCause: Record<string, Partial<Record<StepVerdict, number>>> = {}
    for (const cause of causeKeys) {
      const named = verdicts.filter(v => meanings[v]!.causes.includes(cause))
      const target = named.length > 0 ? named : passing
      const n = verdicts.map((v) => {
        const count = counts[v]?.[cause] ?? 0
        assertCount(count, `count of step "${step.key}", verdict ${v}, cause "${cause}"`)
        return count
      })
      const total = n.reduce((a, b) => a + b, 0)
      const pseudo = target.length > 0 ? weight : 0
      const row: Partial<Record<StepVerdict, number>> = {}
      verdicts.forEach((v, i) => {
        const alpha = target.includes(v) ? weight / target.length : 0
        row[v] = (n[i]! + alpha + 1) / (total + pseudo + verdicts.length)
      })
      perCause[cause] = row
    }
    table[step.key] = perCause
  }
  return table
}

function listedPriors(causes: ReadonlyArray<ReasoningCause>, priors: Readonly<Record<string, number>> | undefined): number[] {
  const check = (value: number, what: string) => {
    if (!Number.isFinite(value) || value < 0) throw new RangeError(`${what} must be a finite weight ≥ 0 (got ${value})`)
    return value
  }
  let given = causes.map(c => (priors?.[c.key] === undefined ? undefined : check(priors[c.key]!, `prior of "${c.key}"`)))
  if (given.every(p => p === undefined)) given = causes.map(c => (c.prior === undefined ? undefined : check(c.prior, `author's prior of "${c.key}"`)))
  const known = given.filter((p): p is number => p !== undefined)
  const fallback = known.length > 0 ? known.reduce((a, b) => a + b, 0) / known.length : 1
  const weights = given.map(p => p ?? fallback)
  const sum = weights.reduce((a, b) => a + b, 0)
  return sum > 0 ? weights.map(w => w / sum) : causes.map(() => 1 / causes.length)
}

/**
 * The probability of each cause, and of "cause not listed", given the readings so far.
 *
 *   P(c | readings) ∝ P(c) · Π_{s read} P(v_s | s, c)     (table from `verdictLikelihoods`)
 *
 * P(c) = (1 − u)·π_c for a listed cause (π the normalised `priors`) and u for "not listed",
 * u = `unlistedPrior` or `unlistedPrior(stats)`. Steps not read are left out, which is exact
 * for naive Bayes (their verdicts sum out). Computed in logs and normalised with log-sum-exp.
 * Throws RangeError on a negative count or weight, a repeated cause key, or u outside [0, 1).
 *
 * @example
 * const before = causeProbabilities({ causes, steps, priors })
 * const after = causeProbabilities({ causes, steps, priors, observed: { bridge: 'low' } })
 * after.probabilities.bridge_shorted // 0.64
 * after.probabilities[UNLISTED_CAUSE] // what is left for a cause the procedure does not list
 */
export function causeProbabilities(input: PosteriorInput): Posterior {
  const { causes, steps } = input
  const seen = new Set<string>()
  for (const c of causes) {
    if (seen.has(c.key)) throw new RangeError(`cause "${c.key}" is listed twice`)
    seen.add(c.key)
  }
  const u = input.unlistedPrior ?? unlistedPrior(input.stats)
  if (!(Number.isFinite(u) && u >= 0 && u < 1)) throw new RangeError(`unlistedPrior must be in [0, 1) (got ${u})`)
  const table = verdictLikelihoods(input)
  const stepByKey = new Map(steps.map(s => [s.key, s]))

  const used: Posterior['used'] = []
  const ignored: Posterior['ignored'] = []
  for (const [stepKey, verdict] of Object.entries(input.observed ?? {})) {
    if (verdict === null || verdict === undefined) continue
    const step = stepByKey.get(stepKey)
    if (!step) ignored.push({ stepKey, verdict, reason: 'not a step of this procedure' })
    else if (table[stepKey]![UNLISTED_CAUSE]![verdict] === undefined) ignored.push({ stepKey, verdict, reason: `step "${stepKey}" cannot read ${verdict}` })
    else used.push({ stepKey, verdict })
  }

  const keys = [...causes.map(c => c.key), UNLISTED_CAUSE]
  const pi = causes.length > 0 ? listedPriors(causes, input.priors) : []
  const priors = [...pi.map(p => (1 - u) * p), causes.length > 0 ? u : 1]
  const logs = keys.map((key, i) => {
    let log = priors[i]! > 0 ? Math.log(priors[i]!) : -Infinity
    for (const { stepKey, verdict } of used) log += Math.log(table[stepKey]![key]![verdict]!)
    return log
  })
  const posterior = normaliseLogScores(logs)

  const ranked: CauseProbability[] = keys.map((key, i) => ({
    key,
    name: i < causes.length ? causes[i]!.name : UNLISTED_NAME,
    probability: posterior[i]!,
    prior: priors[i]!,
    unlisted: i === causes.length,
  }))
  const order = new Map(keys.map((k, i) => [k, i]))
  ranked.sort((a, b) => b.probability - a.probability || order.get(a.key)! - order.get(b.key)!)
  return { causes: ranked, probabilities: Object.fromEntries(keys.map((k, i) => [k, posterior[i]!])), used, ignored }
}

/** Changes smaller than this (one percentage point) are not worth a line. */
export const MIN_CHANGE_SHOWN = 0.01
/** How many changed causes a reading's summary names at most. */
export const CHANGES_SHOWN = 3

/**
 * A probability as the bench reads it: `17 %`, `<1 %` for a sliver, `>99 %` short of certainty.
 *
 * @example
 * formatProbability(0.1666) // '17 %'
 */
export function formatProbability(p: number): string {
  if (p > 0 && p < 0.005) return '<1 %'
  if (p < 1 && p >= 0.995) return '>99 %'
  return `${Math.round(p * 100)} %`
}

export interface ProbabilityChange {
  key: string
  name: string
  before: number
  after: number
  /** E.g. `BR1 shorted 17 % → 64 %`. */
  text: string
}

/**
 * What a reading changed: the causes whose probability moved most (at least MIN_CHANGE_SHOWN,
 * and visibly once rounded), largest move first, at most `limit` of them.
 *
 * @example
 * describeChange(before, after).map(c => c.text) // ['BR1 shorted 17 % → 64 %', 'Q1 shorted 40 % → 15 %']
 */
export function describeChange(before: Posterior, after: Posterior, opts: { limit?: number, minChange?: number } = {}): ProbabilityChange[] {
  const limit = opts.limit ?? CHANGES_SHOWN
  const minChange = opts.minChange ?? MIN_CHANGE_SHOWN
  const changes: ProbabilityChange[] = []
  for (const cause of after.causes) {
    const was = before.probabilities[cause.key] ?? 0
    const from = formatProbability(was)
    const to = formatProbability(cause.probability)
    if (Math.abs(cause.probability - was) < minChange || from === to) continue
    changes.push({ key: cause.key, name: cause.name, before: was, after: cause.probability, text: `${cause.name} ${from} → ${to}` })
  }
  changes.sort((a, b) => Math.abs(b.after - b.before) - Math.abs(a.after - a.before))
  return changes.slice(0, limit)
}
