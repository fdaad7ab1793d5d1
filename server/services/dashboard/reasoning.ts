import { QueryTypes } from 'sequelize'
import type { RevisionContent } from '../../../shared/types/procedure'
import type { DashboardDto } from '../../../shared/types/records'
import { ESCALATE } from '../../../shared/types/verdicts'
import type { StepVerdict } from '../../../shared/types/verdicts'
import { ESCALATE_LABEL, UNLISTED_CAUSE, branchStatistics, isFlow, verdictsOf } from '../../../shared/utils/diagnosis'
import type { LearnedStats } from '../../../shared/utils/diagnosis'
import { Procedure, Revision, useDb } from '../../db'
import { causeId } from '../evidence/causes'

type Figures = Pick<DashboardDto, 'decidingSteps' | 'flowBranches'>
interface VerdictRow { pid: number, step: string, verdict: StepVerdict, cause: string, n: number }
interface BranchRow { pid: number, step: string, verdict: StepVerdict, taken: number, confirmed: number }

/** Per step of a live revision: how often its verdict named the confirmed cause, of the records that read it. */
function decidingSteps(content: RevisionContent, rows: VerdictRow[]) {
  return content.steps.map((step) => {
    const meanings = verdictsOf(step)
    let decided = 0
    let of = 0
    for (const r of rows) {
      if (r.step !== step.key || r.cause === UNLISTED_CAUSE) continue
      of += r.n
      if (meanings[r.verdict]?.causes.includes(r.cause)) decided += r.n
    }
    return { stepKey: step.key, title: step.title, decided, of }
  }).filter(s => s.of > 0).sort((a, b) => b.decided - a.decided)
}

function flowBranches(slug: string, content: RevisionContent, rows: BranchRow[]) {
  const branches: LearnedStats['branches'] = {}
  for (const r of rows) (branches[r.step] ??= {})[r.verdict] = { taken: r.taken, confirmed: r.confirmed }
  const title = new Map(content.steps.map(s => [s.key, s.title]))
  const cause = new Map(content.causes.map(c => [c.key, c.name]))
  return branchStatistics(content.steps, branches).map(b => ({
    stepKey: b.stepKey,
    stepTitle: title.get(b.stepKey) ?? b.stepKey,
    verdict: b.verdict,
    taken: b.taken,
    concludes: b.concludes === null ? null : b.concludes === ESCALATE ? { id: ESCALATE, label: ESCALATE_LABEL } : { id: causeId(slug, b.concludes), label: cause.get(b.concludes) ?? b.concludes },
    confirmed: b.confirmed,
  }))
}

/**
 * What the team's closed records say about the live procedures' steps: which steps most often
 * decided the cause, and how each branch of a flow is used. Read from the learned counts, all
 * records whatever the dashboard's range.
 */
export async function reasoningFigures(): Promise<Figures> {
  const db = useDb()
  const [verdicts, branches] = await Promise.all([
    db.query<VerdictRow>('SELECT procedure_id AS pid, step_key AS step, verdict, cause_key AS cause, n FROM learned_verdicts WHERE n > 0', { type: QueryTypes.SELECT, raw: true }),
    db.query<BranchRow>('SELECT procedure_id AS pid, step_key AS step, verdict, taken, confirmed FROM learned_branches', { type: QueryTypes.SELECT, raw: true }),
  ])
  const ids = [...new Set([...verdicts.map(r => r.pid), ...branches.map(r => r.pid)])]
  if (!ids.length) return { decidingSteps: [], flowBranches: [] }
  const procs = await Procedure.findAll({ where: { id: ids, status: 'active' }, attributes: ['id', 'slug', 'publishedRevisionId'], raw: true })
  const revs = await Revision.findAll({ where: { id: procs.map(p => p.publishedRevisionId).filter((x): x is number => x !== null) }, attributes: ['procedureId', 'content'] })
  const contentOf = new Map(revs.map(r => [r.procedureId, r.content]))
  const out: Figures = { decidingSteps: [], flowBranches: [] }
  const reads = (pid: number) => verdicts.filter(r => r.pid === pid)
  for (const p of procs) {
    const content = contentOf.get(p.id)
    if (!content) continue
    const steps = decidingSteps(content, reads(p.id).map(r => ({ ...r, n: Number(r.n) })))
    if (steps.length) out.decidingSteps.push({ procedureSlug: p.slug, procedureTitle: content.title, steps })
    if (isFlow(content.steps)) {
      const rows = branches.filter(r => r.pid === p.id).map(r => ({ ...r, taken: Number(r.taken), confirmed: Number(r.confirmed) }))
      out.flowBranches.push({ procedureSlug: p.slug, procedureTitle: content.title, branches: flowBranches(p.slug, content, rows) })
    }
  }
  const weight = (x: Figures['decidingSteps'][number]) => Math.max(...x.steps.map(s => s.of))
  out.decidingSteps.sort((a, b) => weight(b) - weight(a) || a.procedureSlug.localeCompare(b.procedureSlug))
  out.flowBranches.sort((a, b) => a.procedureSlug.localeCompare(b.procedureSlug))
  return out
}
