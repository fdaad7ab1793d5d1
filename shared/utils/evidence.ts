/**
 * Evidence from confirmed repairs, weighed with naive Bayes. Everything is done in logs so that
 * many small likelihoods do not underflow, and posteriors are normalised with log-sum-exp.
 */

export interface NaiveBayesClass {
  key: string
  /** Training examples in the class (may be fractional, e.g. weighted records). */
  count: number
  /** For each feature i, how many examples of the class have the observed value of feature i. */
  featureCounts: number[]
}

export interface NaiveBayesInput {
  classes: NaiveBayesClass[]
  /** Number of values each feature can take (k_i); only Laplace smoothing uses it. */
  featureCardinalities: number[]
  smoothing: 'none' | 'laplace'
}

export interface NaiveBayesScore {
  key: string
  logScore: number
  /** P(c) · Π P(x_i | c), not normalised. */
  score: number
  posterior: number
}

/** log Σ exp(x_i), shifted by the largest term so that exp never underflows to all zeros. */
export function logSumExp(logs: number[]): number {
  const top = Math.max(...logs)
  if (top === -Infinity || logs.length === 0) return -Infinity
  if (top === Infinity) return Infinity
  let sum = 0
  for (const l of logs) sum += Math.exp(l - top)
  return top + Math.log(sum)
}

/** Normalises log scores into probabilities; all −∞ (no class possible) gives all zeros. */
export function normaliseLogScores(logs: number[]): number[] {
  const total = logSumExp(logs)
  if (total === -Infinity) return logs.map(() => 0)
  return logs.map(l => Math.exp(l - total))
}

function safeLog(x: number): number {
  return x > 0 ? Math.log(x) : -Infinity
}

function assertCount(value: number, what: string): void {
  if (!Number.isFinite(value) || value < 0) throw new RangeError(`${what} must be a finite count ≥ 0 (got ${value})`)
}

/**
 * The textbook naive Bayes classifier: P(c) = n_c / N (unsmoothed), and
 * P(x_i | c) = n_{c,i} / n_c, or (n_{c,i} + 1) / (n_c + k_i) with Laplace add-one smoothing.
 * A zero probability gives logScore −∞, score 0 and posterior 0 rather than NaN.
 */
export function naiveBayesScores(input: NaiveBayesInput): NaiveBayesScore[] {
  const { classes, featureCardinalities, smoothing } = input
  featureCardinalities.forEach((k, i) => {
    if (!Number.isInteger(k) || k < 1) throw new RangeError(`feature ${i} must have a cardinality ≥ 1 (got ${k})`)
  })
  let total = 0
  for (const c of classes) {
    assertCount(c.count, `count of class "${c.key}"`)
    if (c.featureCounts.length !== featureCardinalities.length) {
      throw new RangeError(`class "${c.key}" has ${c.featureCounts.length} feature counts for ${featureCardinalities.length} features`)
    }
    c.featureCounts.forEach((n, i) => {
      assertCount(n, `feature ${i} count of class "${c.key}"`)
      if (n > c.count) throw new RangeError(`class "${c.key}": feature ${i} count ${n} exceeds the class count ${c.count}`)
    })
    total += c.count
  }

  const logs = classes.map((c) => {
    let log = total > 0 ? safeLog(c.count / total) : -Infinity
    c.featureCounts.forEach((n, i) => {
      const likelihood = smoothing === 'laplace'
        ? (n + 1) / (c.count + featureCardinalities[i]!)
        : c.count > 0 ? n / c.count : 0
      log += safeLog(likelihood)
    })
    return log
  })
  const posteriors = normaliseLogScores(logs)
  return classes.map((c, i) => ({ key: c.key, logScore: logs[i]!, score: Math.exp(logs[i]!), posterior: posteriors[i]! }))
}

export interface CauseEvidence {
  id: string
  label: string
  /** The procedure author's weight for the cause, in (0, 1]. */
  prior?: number
  /** Confirmed repair records for the device type whose cause was this one. */
  confirmed: number
  /** Of those records, how many listed each symptom (by symptom slug). */
  symptomHits: Record<string, number>
}

export interface RankCausesInput {
  causes: CauseEvidence[]
  /** Symptoms the technician observed; only these enter the likelihood. */
  symptoms: string[]
  /** Confirmed records considered (N). */
  totalRecords: number
  /** How many records' worth of weight the author's priors carry (m). */
  priorWeight?: number
}

export interface RankedCause {
  id: string
  label: string
  posterior: number
  logScore: number
  confirmed: number
  of: number
  support: string
}

/** Records' worth of weight given to the author's priors when none is named. */
export const DEFAULT_PRIOR_WEIGHT = 5

/** The line shown under a ranked cause, e.g. "found in 14 of 20 closed jobs". */
export function describeSupport(confirmed: number, totalRecords: number): string {
  if (totalRecords <= 0) return 'no closed jobs name a cause yet'
  return `found in ${confirmed} of ${totalRecords} closed ${totalRecords === 1 ? 'job' : 'jobs'}`
}

/**
 * Ranks the likely causes of a fault from the author's priors and confirmed repair records.
 *
 * The product's contract: for each candidate cause c,
 *
 *   logScore(c) = log P(c) + Σ_i log P(s_i | c)
 *
 *   P(c)       = (n_c + m·π_c) / (N + m)
 *   P(s_i | c) = (n_{c,s_i} + 1) / (n_c + 2)
 *
 * where N is the number of confirmed records considered, n_c the records confirmed with cause c,
 * n_{c,s_i} those of them that listed the observed symptom s_i, m = priorWeight (default 5), and
 * π_c the author's priors normalised to sum to 1 over the candidate causes. With no records the
 * order is the author's; as records accumulate the counts take over. The symptom likelihood is
 * Laplace add-one over present/absent, so a cause never seen with a symptom is lowered, not ruled
 * out. A cause without an author's prior gets the mean of the given priors (an even share when no
 * cause has one). Posteriors are the scores normalised with log-sum-exp. Ties are broken by
 * label, then id, so the same evidence always gives the same order.
 *
 * Throws RangeError on inconsistent counts (negative, or more symptom hits than confirmations).
 */
export function rankCauses(input: RankCausesInput): RankedCause[] {
  const { causes, totalRecords } = input
  const m = input.priorWeight ?? DEFAULT_PRIOR_WEIGHT
  if (!Number.isFinite(m) || m < 0) throw new RangeError(`priorWeight must be ≥ 0 (got ${m})`)
  assertCount(totalRecords, 'totalRecords')
  const seen = new Set<string>()
  for (const c of causes) {
    if (seen.has(c.id)) throw new RangeError(`cause "${c.id}" is listed twice`)
    seen.add(c.id)
    assertCount(c.confirmed, `confirmed count of "${c.id}"`)
    if (c.prior !== undefined && !(Number.isFinite(c.prior) && c.prior > 0)) {
      throw new RangeError(`prior of "${c.id}" must be above 0 (got ${c.prior})`)
    }
    for (const [symptom, hits] of Object.entries(c.symptomHits)) {
      assertCount(hits, `hits of "${symptom}" for "${c.id}"`)
      if (hits > c.confirmed) throw new RangeError(`"${c.id}": ${hits} records list "${symptom}" but only ${c.confirmed} confirm the cause`)
    }
  }
  if (causes.length === 0) return []

  const given = causes.flatMap(c => (c.prior === undefined ? [] : [c.prior]))
  const fallback = given.length > 0 ? given.reduce((a, b) => a + b, 0) / given.length : 1
  const weights = causes.map(c => c.prior ?? fallback)
  const weightSum = weights.reduce((a, b) => a + b, 0)
  const symptoms = [...new Set(input.symptoms)]

  const logs = causes.map((c, i) => {
    const pi = weights[i]! / weightSum
    // With no records and no prior weight the formula is 0/0; the author's order is all there is.
    const prior = totalRecords + m > 0 ? (c.confirmed + m * pi) / (totalRecords + m) : pi
    let log = safeLog(prior)
    for (const s of symptoms) log += Math.log(((c.symptomHits[s] ?? 0) + 1) / (c.confirmed + 2))
    return log
  })
  const posteriors = normaliseLogScores(logs)

  const ranked = causes.map((c, i): RankedCause => ({
    id: c.id,
    label: c.label,
    posterior: posteriors[i]!,
    logScore: logs[i]!,
    confirmed: c.confirmed,
    of: totalRecords,
    support: describeSupport(c.confirmed, totalRecords),
  }))
  return ranked.sort((a, b) => {
    const gap = b.logScore - a.logScore
    const tied = a.logScore === b.logScore || Math.abs(gap) <= 1e-12 * Math.max(1, Math.abs(a.logScore))
    if (!tied) return gap
    if (a.label !== b.label) return a.label < b.label ? -1 : 1
    return a.id < b.id ? -1 : a.id > b.id ? 1 : 0
  })
}
