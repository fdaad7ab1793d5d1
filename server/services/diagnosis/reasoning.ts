import type { RevisionContent } from '../../../shared/types/procedure'
import type { DiagnosisDto, RecordReasoningDto } from '../../../shared/types/records'
import { ESCALATE } from '../../../shared/types/verdicts'
import type { StepVerdict } from '../../../shared/types/verdicts'
import {
  ESCALATE_LABEL,
  UNLISTED_CAUSE,
  causeProbabilities,
  conclusionWarning,
  followFlow,
  orderSteps,
  unlistedPrior,
} from '../../../shared/utils/diagnosis'
import { causeId } from '../evidence/causes'
import { evidenceFor } from '../evidence/ranking'
import { learnedStats } from './learned'

// Live reasoning about one record: the inputs the browser needs to reason as the server does
// (priors from today's evidence ranking, the counts learned from closed records) and the
// diagnosis computed from them by the same pure functions.

/** A record's guide: the procedure and the pinned revision's content. */
export interface Guide {
  procedureId: number
  slug: string
  content: Pick<RevisionContent, 'causes' | 'steps'>
}

/**
 * The priors of the guide's causes for the record's device type and symptoms (the evidence
 * ranking over this procedure's causes), the share kept for a cause not listed, and the counts
 * learned from the procedure's closed records.
 */
export async function reasoningInputs(guide: Guide, record: { deviceType: string, symptoms: string[] }): Promise<RecordReasoningDto> {
  const candidates = guide.content.causes.map(c => ({ procedureId: guide.procedureId, procedureSlug: guide.slug, causeKey: c.key, label: c.name, prior: c.prior }))
  const [evidence, stats] = await Promise.all([
    evidenceFor({ deviceType: record.deviceType, symptoms: record.symptoms, procedureId: guide.procedureId, candidates }),
    learnedStats(guide.procedureId),
  ])
  const priors: Record<string, number> = {}
  for (const e of evidence.data) priors[e.causeKey] = e.posterior
  return { priors, unlistedPrior: unlistedPrior(stats), stats }
}

/** The concluded cause (or escalation) as the diagnosis names it. */
function conclusion(guide: Guide, concluded: string | null): DiagnosisDto['concluded'] {
  if (concluded === null) return null
  if (concluded === ESCALATE) return { id: ESCALATE, label: ESCALATE_LABEL }
  return { id: causeId(guide.slug, concluded), label: guide.content.causes.find(c => c.key === concluded)?.name ?? concluded }
}

/**
 * Where a guided diagnosis stands given the verdicts so far: every cause's probability (and
 * "not listed"), the steps worth doing next (p/c order; in a flow the one step it leads to), the
 * path a flow took, its conclusion, and a warning when that conclusion disagrees strongly with
 * the probabilities. `done` steps without a verdict are not suggested again.
 */
export function diagnosisOf(guide: Guide, inputs: RecordReasoningDto, verdicts: Record<string, StepVerdict>, done: ReadonlySet<string>): DiagnosisDto {
  const { causes, steps } = guide.content
  const posterior = causeProbabilities({ causes, steps, priors: inputs.priors, observed: verdicts, stats: inputs.stats, unlistedPrior: inputs.unlistedPrior })
  const flow = followFlow(steps, verdicts)
  const ordered = orderSteps({ steps, probabilities: posterior.probabilities, observed: verdicts, stats: inputs.stats })
  const wanted = flow.isFlow ? ordered.filter(s => s.stepKey === flow.current) : ordered.filter(s => !done.has(s.stepKey))
  return {
    causes: posterior.causes.filter(c => !c.unlisted).map(c => ({ id: causeId(guide.slug, c.key), label: c.name, probability: c.probability })),
    unlisted: posterior.probabilities[UNLISTED_CAUSE] ?? 0,
    next: wanted.map(s => ({ stepKey: s.stepKey, title: s.title, minutes: s.minutes, findsFault: s.findsFault, minutesFrom: s.minutesFrom })),
    path: flow.path,
    concluded: conclusion(guide, flow.concluded),
    warning: conclusionWarning(flow.concluded, posterior)?.message ?? null,
    isFlow: flow.isFlow,
  }
}
