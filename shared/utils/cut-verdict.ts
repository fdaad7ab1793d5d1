import type { CutType } from './waveform/analyse'

/** What a capture's cut says on a pass / fail step that names the cuts a good unit shows. */
export interface CutVerdict {
  matches: boolean
  verdict: 'pass' | 'fail'
}

/**
 * Whether a capture shows one of the cuts a good unit shows (`expected`), as the step's verdict.
 * No expectation, no verdict. A load with no voltage shows no cut at all, so it never passes,
 * even where a full sine ('none') is what a good unit shows.
 */
export function cutVerdict(expected: readonly string[] | undefined, features: { cutType: CutType, dead: boolean }): CutVerdict | null {
  if (!expected?.length) return null
  const matches = !features.dead && expected.includes(features.cutType)
  return { matches, verdict: matches ? 'pass' : 'fail' }
}
