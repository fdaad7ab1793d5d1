/**
 * Reference signatures: a capture's features reduced to a short vector, every component scaled
 * to 0..1, so an uploaded capture can be matched against the captures authors attached to steps.
 *
 * Layout and weights (the weight says how much a full-scale difference in that component counts):
 *
 * | # | component                        | scaling                              | weight |
 * |---|----------------------------------|--------------------------------------|--------|
 * | 0 | conduction angle, positive half  | degrees / 180                        | 3      |
 * | 1 | conduction angle, negative half  | degrees / 180                        | 3      |
 * | 2 | asymmetry                        | (asymmetry + 1) / 2                  | 2      |
 * | 3–7 | cut type, one-hot (none, leading, trailing, half missing, irregular) | 0 / 1 | 1 each |
 * | 8 | dead (no voltage at the load)    | 0 / 1                                | 4      |
 * | 9 | crest factor                     | log2(CF / √2) / 2, clamped 0..1      | 0.5    |
 * | 10 | voltage THD                     | THD_R = THD_F / √(1 + THD_F²)        | 0.5    |
 * | 11 | level                           | Vrms / nominal mains, clamped 0..1   | 2      |
 *
 * Why these weights:
 * - Conduction angles carry the most: they are what a phase controller sets and the first thing a
 *   one-half fault changes, and the analysis measures them to a fraction of a degree. Each
 *   polarity counts on its own, so a single failed half moves the vector a long way.
 * - Asymmetry restates a one-half fault in RMS terms; it stays reliable where the guard zone
 *   around the zero crossings blurs very small angles, hence a weight close to the angles'.
 * - The cut type is a summary of the angles' pattern. A differing type changes two one-hot entries
 *   (so it adds 2); it stays below the angles so that a borderline call (a shallow cut read as
 *   none) cannot outweigh angles that agree.
 * - Dead is a class of its own and must sit far from every live signature.
 * - Crest factor and THD follow from the angles for an ideal cut but also carry the shape of soft
 *   edges and the supply's own distortion, which vary from site to site: tie-breakers only.
 *   THD is mapped to THD_R (Shmilovitz, IEEE Trans. Power Delivery 2005), which is bounded.
 * - Level is how much of the mains reaches the load: load RMS over the nominal mains voltage
 *   nearest the supply RMS fitted to the conducting parts, so a 120 V and a 230 V bench compare
 *   alike, while a few tens of volts picked up by a disconnected load (a full sine, but far below
 *   any mains) do not pass for a healthy output. It separates a weak output from a dead one
 *   when the angles alone are ambiguous.
 *
 * Distance = √(Σ wₖ·(aₖ − bₖ)² / Σ wₖ), a weighted RMS difference that lies in 0..1 because
 * every component does; similarity = 1 − distance.
 */
import type { CutType, WaveformFeatures } from './analyse'

export const SIGNATURE_COMPONENTS = [
  'conduction_positive',
  'conduction_negative',
  'asymmetry',
  'cut_none',
  'cut_leading_edge',
  'cut_trailing_edge',
  'cut_half_missing',
  'cut_irregular',
  'dead',
  'crest_factor',
  'thd',
  'level',
] as const

export const SIGNATURE_WEIGHTS: readonly number[] = [3, 3, 2, 1, 1, 1, 1, 1, 4, 0.5, 0.5, 2]

const CUT_ORDER: readonly CutType[] = ['none', 'leading_edge', 'trailing_edge', 'half_missing', 'irregular']
const WEIGHT_SUM = SIGNATURE_WEIGHTS.reduce((s, w) => s + w, 0)

/** The features a signature needs; `dead` and `supplyVrms` may be missing from older stored features. */
export type SignatureFeatures = Pick<
  WaveformFeatures,
  'vrms' | 'asymmetry' | 'conductionAngleDeg' | 'cutType' | 'crestFactor' | 'thd'
> & Partial<Pick<WaveformFeatures, 'dead' | 'supplyVrms'>>

export interface SignatureOptions {
  /** Nominal mains RMS; by default the one nearest the fitted supply, or 230 V when there is none. */
  nominalVrms?: number
}

/** Nominal mains voltages in use (IEC 60038 and national ones; from memory), line to neutral. */
export const NOMINAL_MAINS_VRMS: readonly number[] = [100, 110, 115, 120, 127, 200, 208, 220, 230, 240, 277]

export function nearestNominalVrms(supplyVrms: number): number {
  let best = NOMINAL_MAINS_VRMS[0]!
  for (const v of NOMINAL_MAINS_VRMS) if (Math.abs(v - supplyVrms) < Math.abs(best - supplyVrms)) best = v
  return best
}

function unit(x: number): number {
  return Number.isFinite(x) ? Math.min(1, Math.max(0, x)) : 0
}

export function signatureVector(features: SignatureFeatures, options: SignatureOptions = {}): Float64Array {
  const vector = new Float64Array(SIGNATURE_COMPONENTS.length)
  const dead = features.dead ?? false
  vector[0] = unit(features.conductionAngleDeg.positive / 180)
  vector[1] = unit(features.conductionAngleDeg.negative / 180)
  vector[2] = unit((features.asymmetry + 1) / 2)
  vector[3 + CUT_ORDER.indexOf(features.cutType)] = 1
  vector[8] = dead ? 1 : 0
  const crest = features.crestFactor
  vector[9] = dead || crest === null ? 0 : unit(Math.log2(crest / Math.SQRT2) / 2)
  const thd = features.thd
  vector[10] = dead || thd === null ? 0 : unit(thd / Math.sqrt(1 + thd * thd))
  const supply = features.supplyVrms ?? null
  const nominal = options.nominalVrms ?? (supply !== null ? nearestNominalVrms(supply) : 230)
  vector[11] = dead ? 0 : unit(features.vrms / nominal)
  return vector
}

export function signatureDistance(a: SignatureFeatures | Float64Array, b: SignatureFeatures | Float64Array, options: SignatureOptions = {}): number {
  const va = a instanceof Float64Array ? a : signatureVector(a, options)
  const vb = b instanceof Float64Array ? b : signatureVector(b, options)
  let sum = 0
  for (let k = 0; k < SIGNATURE_WEIGHTS.length; k++) {
    const d = (va[k] ?? 0) - (vb[k] ?? 0)
    sum += SIGNATURE_WEIGHTS[k]! * d * d
  }
  return Math.sqrt(sum / WEIGHT_SUM)
}

export interface SignatureMatch<Id> {
  id: Id
  distance: number
  similarity: number
}

/** References sorted from the closest; ties keep the references' order. */
export function rankSignatures<Id>(
  query: SignatureFeatures,
  references: ReadonlyArray<{ id: Id, features: SignatureFeatures }>,
  options: SignatureOptions = {},
): Array<SignatureMatch<Id>> {
  const q = signatureVector(query, options)
  return references
    .map((ref, order) => {
      const distance = signatureDistance(q, signatureVector(ref.features, options))
      return { id: ref.id, distance, similarity: 1 - distance, order }
    })
    .sort((x, y) => x.distance - y.distance || x.order - y.order)
    .map(({ id, distance, similarity }) => ({ id, distance, similarity }))
}

/**
 * Ranked matches gathered per group (a procedure), each group in rank order and the groups
 * ordered by their best match: a procedure with three references is one entry, not three.
 */
export function groupRanked<T>(ranked: readonly T[], key: (item: T) => string): T[][] {
  const groups = new Map<string, T[]>()
  for (const item of ranked) {
    const k = key(item)
    const group = groups.get(k)
    if (group) group.push(item)
    else groups.set(k, [item])
  }
  return [...groups.values()]
}
