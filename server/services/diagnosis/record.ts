import { QueryTypes } from 'sequelize'
import type { RevisionContent } from '../../../shared/types/procedure'
import type { DiagnosisDto, RecordReasoningDto } from '../../../shared/types/records'
import { useDb } from '../../db'
import type { RepairRecord } from '../../db'
import { evidenceFor } from '../evidence/ranking'
import { findRecord } from '../records/access'
import { storedVerdicts } from '../records/steps'
import { diagnosisOf, reasoningInputs, type Guide } from './reasoning'

/** The record's guide procedure and pinned revision, in one query; null for a record started from symptoms. */
export async function guideOf(r: Pick<RepairRecord, 'procedureId' | 'revisionId'>): Promise<Guide | null> {
  if (r.procedureId === null || r.revisionId === null) return null
  const [row] = await useDb().query<{ slug: string, content: unknown }>(
    'SELECT p.slug, v.content FROM revisions v JOIN procedures p ON p.id = v.procedure_id WHERE v.id = :revision AND p.id = :procedure',
    { type: QueryTypes.SELECT, raw: true, replacements: { revision: r.revisionId, procedure: r.procedureId } },
  )
  if (!row) return null
  const content = (typeof row.content === 'string' ? JSON.parse(row.content) : row.content) as RevisionContent
  return { procedureId: r.procedureId, slug: row.slug, content }
}

/** The reasoning inputs of a record's guide, for its page; null without a guide. */
export async function recordReasoning(r: RepairRecord, guide?: Guide | null): Promise<RecordReasoningDto | null> {
  const g = guide === undefined ? await guideOf(r) : guide
  return g ? await reasoningInputs(g, r) : null
}

/**
 * GET /api/records/[id]/diagnosis. A record started from symptoms alone has no steps to reason
 * over: its causes are the evidence ranking of the matching procedures, nothing kept for "not
 * listed", nothing to suggest.
 */
export async function diagnoseRecord(id: number): Promise<DiagnosisDto> {
  const r = await findRecord(id)
  const guide = await guideOf(r)
  if (!guide) {
    const evidence = await evidenceFor({ deviceType: r.deviceType, symptoms: r.symptoms })
    return {
      causes: evidence.data.map(e => ({ id: e.id, label: e.label, probability: e.posterior })),
      unlisted: evidence.data.length ? 0 : 1,
      next: [],
      path: [],
      concluded: null,
      warning: null,
      isFlow: false,
    }
  }
  const done = new Set(Object.entries(r.steps).filter(([, s]) => s.done).map(([key]) => key))
  return diagnosisOf(guide, await reasoningInputs(guide, r), storedVerdicts(r.steps), done)
}
