import { rankCauses } from '../../../shared/utils/evidence'
import type { EvidenceDto } from '../../../shared/types/records'
import { notFound } from '../errors'
import { candidateCauses, causeId, liveProcedureFacts, type CandidateCause } from './causes'
import { confirmedCounts } from './counts'

/**
 * Causes ranked by naive Bayes over the team's confirmed records (formula in shared/utils/evidence.ts).
 * `candidates`, when the caller has them already (one procedure's causes), saves reading them again.
 */
export async function evidenceFor(opts: { deviceType: string, symptoms: string[], procedureId?: number, candidates?: CandidateCause[] }): Promise<EvidenceDto> {
  const [candidates, counts] = await Promise.all([opts.candidates ?? candidateCauses(opts), confirmedCounts(opts.deviceType, opts.symptoms)])
  const seen = new Set<string>()
  const unique = candidates.filter(c => !seen.has(`${c.procedureId}:${c.causeKey}`) && seen.add(`${c.procedureId}:${c.causeKey}`))
  if (!unique.length) return { data: [], totalRecords: counts.total }
  const byId = new Map(unique.map(c => [causeId(c.procedureSlug, c.causeKey), c]))
  const ranked = rankCauses({
    causes: unique.map((c) => {
      const found = counts.byCause.get(`${c.procedureId}:${c.causeKey}`)
      return { id: causeId(c.procedureSlug, c.causeKey), label: c.label, prior: c.prior, confirmed: found?.confirmed ?? 0, symptomHits: found?.symptomHits ?? {} }
    }),
    symptoms: opts.symptoms,
    totalRecords: counts.total,
  })
  return {
    totalRecords: counts.total,
    data: ranked.map((r) => {
      const c = byId.get(r.id)!
      return { id: r.id, procedureSlug: c.procedureSlug, causeKey: c.causeKey, label: r.label, posterior: r.posterior, confirmed: r.confirmed, of: r.of, support: r.support }
    }),
  }
}

/**
 * The ranking for one live procedure: its own causes, for its device type and symptoms unless
 * the caller names others.
 */
export async function evidenceForProcedure(slug: string, override: { deviceType?: string, symptoms: string[] }): Promise<EvidenceDto> {
  const live = await liveProcedureFacts(slug)
  if (!live) throw notFound('live procedure')
  return await evidenceFor({ deviceType: override.deviceType ?? live.deviceType, symptoms: override.symptoms.length ? override.symptoms : live.symptoms, procedureId: live.procedureId, candidates: live.causes })
}
