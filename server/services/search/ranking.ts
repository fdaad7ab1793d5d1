/**
 * Putting text matches in order: by score, and by what repair records say about each procedure
 * for the queried symptoms.
 */
import type { EvidenceLookup } from './types'

/** Evidence may lift a procedure by at most 20 % over its text score. */
export const EVIDENCE_WEIGHT = 0.2

/** A text match: its procedure id and score (plus whatever the caller carries along). */
export type Ranked = { id: number, score: number }

/** Best first; equal scores by procedure id, so pages are stable. */
export function byScore(a: Ranked, b: Ranked): number {
  return b.score - a.score || a.id - b.id
}

/**
 * The matches that can appear in the first `pageEnd` places, best first: the ones scoring at
 * least the pageEnd-th best score ÷ `slack` (slack > 1 leaves room for evidence to lift a match
 * by that factor). A numeric sort of the scores finds the threshold, so only this head is
 * sorted with a comparator.
 *
 * @example topMatches(matches, 20, 1.2) // the head of the list that evidence may re-order
 */
export function topMatches<T extends Ranked>(matches: T[], pageEnd: number, slack: number): T[] {
  if (matches.length > 2 * pageEnd) {
    const scores = Float64Array.from(matches, c => c.score).sort()
    const cut = scores[scores.length - pageEnd]! / slack
    matches = matches.filter(c => c.score >= cut)
  }
  return matches.sort(byScore)
}

/**
 * Matches split by how many of the query's model or part codes they name (in their title or
 * "applies to"), most first: a technician who types a model number wants that model's
 * procedures before another product's, however well the other words match.
 *
 * @example byCodesNamed(matches, m => m.codes, ['vr240']) // [[VR-240 procedures], [the rest]]
 */
export function byCodesNamed<T>(matches: T[], codesOf: (match: T) => ReadonlySet<string>, codes: readonly string[]): T[][] {
  if (codes.length === 0) return [matches]
  const tiers: T[][] = Array.from({ length: codes.length + 1 }, () => [])
  for (const m of matches) {
    const own = codesOf(m)
    let named = 0
    for (const code of codes) if (own.has(code)) named++
    tiers[codes.length - named]!.push(m)
  }
  return tiers.filter(tier => tier.length > 0)
}

/**
 * The evidence factor of a procedure: 1 + W · r, r = (confirmed + 1) / (total + 2), the
 * Laplace-smoothed rate at which repair records confirmed its causes (0.5 with no records,
 * → 1 with many confirmations, → 0 with many refutations). Nonsense from the lookup counts as
 * no records.
 *
 * @example evidenceFactor({ confirmed: 9, total: 10 }) // 1 + 0.2 · 10/12 ≈ 1.167
 */
export function evidenceFactor(evidence: { confirmed: number, total: number } | undefined): number {
  const total = evidence && Number.isFinite(evidence.total) ? Math.max(0, evidence.total) : 0
  const confirmed = evidence && Number.isFinite(evidence.confirmed) ? Math.min(total, Math.max(0, evidence.confirmed)) : 0
  return 1 + EVIDENCE_WEIGHT * ((confirmed + 1) / (total + 2))
}

/**
 * Re-orders matches by text score × evidence factor. The factor lies in [1, 1 + W], so
 * evidence re-orders matches whose text scores are within 20 % and never lifts a weak text
 * match over one more than 20 % stronger. Ties keep the text order, then the id order.
 */
export function applyEvidence<T extends Ranked>(head: T[], symptomSlugs: string[], lookup: EvidenceLookup): T[] {
  const weighed = head.map(c => ({ c: { ...c, score: c.score * evidenceFactor(lookup(c.id, symptomSlugs)) }, text: c.score }))
  weighed.sort((a, b) => b.c.score - a.c.score || b.text - a.text || a.c.id - b.c.id)
  return weighed.map(w => w.c)
}
