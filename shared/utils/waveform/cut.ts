/** The kind of phase cut, judged from the shapes and conduction angles of the half-cycles. */
import { clamp, median } from './math'
import { HALF_CYCLE_SHAPES, type CutType, type HalfCycleEvent, type HalfCycleEventKind, type HalfCycleShape, type Polarity, type PolarityStats } from './types'

export function emptyShapes(): Record<HalfCycleShape, number> {
  return { full: 0, leading_cut: 0, trailing_cut: 0, both_cut: 0, absent: 0, erratic: 0 }
}

export interface PolarityAccumulator {
  count: number
  sum2: number
  conduction: number[]
  on: number[]
  off: number[]
  shapes: Record<HalfCycleShape, number>
}

export function polarityStats(p: PolarityAccumulator): PolarityStats {
  let lo = Infinity
  let hi = -Infinity
  for (const c of p.conduction) {
    if (c < lo) lo = c
    if (c > hi) hi = c
  }
  return {
    halfCycles: p.conduction.length,
    medianDeg: median(p.conduction),
    minDeg: lo,
    maxDeg: hi,
    shapes: p.shapes,
    switchOnDeg: p.on.length > 0 ? median(p.on) : null,
    switchOffDeg: p.off.length > 0 ? median(p.off) : null,
  }
}

export interface CutVerdict {
  type: CutType
  confidence: number
  halfFault?: { polarity: Polarity, mode: 'absent' | 'uncontrolled' }
}

/**
 * Picks the regular pattern that most half-cycles agree with. Confidence = share of agreeing
 * half-cycles × clarity, where clarity falls from 1 to ½ as the cut depth nears the guard angle
 * (a cut that shallow could as well be no cut).
 */
export function classifyCut(pos: PolarityStats, neg: PolarityStats, guardDeg: number): CutVerdict {
  const judged = pos.halfCycles + neg.halfCycles
  const share = (posOk: readonly HalfCycleShape[], negOk: readonly HalfCycleShape[]): number => {
    let ok = 0
    for (const s of posOk) ok += pos.shapes[s]
    for (const s of negOk) ok += neg.shapes[s]
    return ok / judged
  }
  const present = ['full', 'leading_cut', 'trailing_cut', 'both_cut'] as const
  const cut = ['leading_cut', 'trailing_cut'] as const
  const clarity = (depthDeg: number): number => 0.5 + 0.5 * clamp((depthDeg - guardDeg) / 10, 0, 1)
  const depth = (p: PolarityStats): number => 180 - p.medianDeg
  const bothDepth = Math.min(depth(pos), depth(neg))
  const candidates: Array<CutVerdict & { score: number }> = [
    { type: 'none', score: share(['full'], ['full']), confidence: 1 },
    { type: 'leading_edge', score: share(['leading_cut'], ['leading_cut']), confidence: clarity(bothDepth) },
    { type: 'trailing_edge', score: share(['trailing_cut'], ['trailing_cut']), confidence: clarity(bothDepth) },
    { type: 'half_missing', score: share(['absent'], present), confidence: 1, halfFault: { polarity: 'positive', mode: 'absent' } },
    { type: 'half_missing', score: share(present, ['absent']), confidence: 1, halfFault: { polarity: 'negative', mode: 'absent' } },
    { type: 'half_missing', score: share(['full'], cut), confidence: clarity(depth(neg)), halfFault: { polarity: 'positive', mode: 'uncontrolled' } },
    { type: 'half_missing', score: share(cut, ['full']), confidence: clarity(depth(pos)), halfFault: { polarity: 'negative', mode: 'uncontrolled' } },
  ]
  let best = candidates[0]!
  for (const c of candidates) if (c.score > best.score) best = c
  if (best.score < 0.8) return { type: 'irregular', confidence: clamp(1 - best.score, 0.2, 1) }
  return { type: best.type, confidence: best.score * best.confidence, ...(best.halfFault ? { halfFault: best.halfFault } : {}) }
}

/** The shape most half-cycles of a polarity have (the first in HALF_CYCLE_SHAPES on a tie). */
export function usualShape(stats: PolarityStats): HalfCycleShape {
  let best: HalfCycleShape = HALF_CYCLE_SHAPES[0]!
  for (const shape of HALF_CYCLE_SHAPES) if (stats.shapes[shape] > stats.shapes[best]) best = shape
  return best
}

function eventKind(shape: HalfCycleShape, usual: HalfCycleShape): HalfCycleEventKind {
  if (shape === 'absent') return 'missing'
  if (shape === 'full') return 'uncontrolled'
  return usual === 'full' ? 'cut' : 'erratic'
}

/**
 * The half-cycles of the window [w0, w1) whose shape differs from the usual one of their
 * polarity, at most `max` of them; `total` counts them all. A single dropped or uncontrolled
 * half-cycle among good ones leaves the verdict standing (it takes 80 % to agree), so it is
 * reported here instead of being lost.
 */
export function halfCycleEvents(
  halves: { start: Float64Array, positive: Uint8Array, shape: Uint8Array }, w0: number, w1: number,
  positive: PolarityStats, negative: PolarityStats, max: number,
): { events: HalfCycleEvent[], total: number } {
  const usual = { positive: usualShape(positive), negative: usualShape(negative) }
  const events: HalfCycleEvent[] = []
  let total = 0
  for (let h = w0; h < w1; h++) {
    const polarity: Polarity = halves.positive[h] === 1 ? 'positive' : 'negative'
    const shape = HALF_CYCLE_SHAPES[halves.shape[h]!]!
    if (shape === usual[polarity]) continue
    total++
    if (events.length < max) events.push({ t: halves.start[h]!, halfCycle: h, polarity, kind: eventKind(shape, usual[polarity]), shape, usual: usual[polarity] })
  }
  return { events, total }
}
