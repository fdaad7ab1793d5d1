import type { RevisionContent } from '../../shared/types/procedure'
import type { Outcome } from '../../shared/types/records'
import { followFlow } from '../../shared/utils/diagnosis'
import { Procedure, RecordSymptom, RepairRecord, Revision, type User, useDb } from '../../server/db'
import { rebuildLearnedCounts } from '../../server/services/diagnosis/learned'
import { rebuildCauseCounts } from '../../server/services/evidence/counts'
import { demoSteps, demoVerdicts } from './record-readings'
import { DEMO_RECORD_PROFILE, type DemoPerson } from './demo-content'
import { seededRandom } from '../../shared/utils/random'

function pick<T>(rand: () => number, weighted: Array<[T, number]>): T {
  const total = weighted.reduce((s, [, w]) => s + w, 0)
  let x = rand() * total
  for (const [v, w] of weighted) {
    x -= w
    if (x <= 0) return v
  }
  return weighted[weighted.length - 1]![0]
}

/** A live procedure the demo records follow: its id, its published revision and that revision's content. */
export interface DemoRecordProcedure { id: number, slug: string, revisionId: number, content: RevisionContent }
type RecordRow = Parameters<typeof RepairRecord.create>[0]

/**
 * The demo's closed repair records, spread over the six months before `now`, with the uneven
 * cause distributions of the demo profile (some causes common, some rare, comebacks, units not
 * worth repairing). Their readings agree with the cause each confirms, and are timed step by
 * step. The same rows every time for the same procedures.
 */
export function demoRecordRows(usable: DemoRecordProcedure[], technicianIds: number[], count: number, now = Date.now()): RecordRow[] {
  const rand = seededRandom(20261201)
  const rows: RecordRow[] = []
  for (let i = 0; i < count; i++) {
    const proc = pick(rand, usable.map(p => [p, DEMO_RECORD_PROFILE[p.slug]!.weight]))
    const profile = DEMO_RECORD_PROFILE[proc.slug]!
    const content = proc.content
    let outcome: Outcome = 'repaired'
    let causeKey: string | null = pick(rand, Object.entries(profile.causes))
    if (rand() < profile.noFaultFound) {
      outcome = 'no_fault_found'
      causeKey = null
    }
    else if (rand() < profile.notEconomicalRate) outcome = 'not_economical'
    else if (rand() < 0.03) outcome = 'escalated'
    const started = new Date(now - (2 + rand() * 178) * 86_400_000)
    const verdicts = demoVerdicts(content.steps, causeKey, outcome === 'escalated')
    const { steps, minutes: stepMinutes } = demoSteps(content.steps, verdicts, started, rand)
    const minutes = Math.max(stepMinutes + 5, Math.round(profile.minutes[0] + rand() * (profile.minutes[1] - profile.minutes[0])))
    const partsEur = outcome === 'repaired' ? profile.partsCostEur[0] + rand() * (profile.partsCostEur[1] - profile.partsCostEur[0]) : 0
    const extraSymptom = rand() < 0.25 ? content.symptoms.slice(0, 1) : []
    rows.push({
      status: 'closed', procedureId: proc.id, revisionId: proc.revisionId, deviceType: content.deviceType,
      symptoms: [...new Set([...content.symptoms.slice(0, 1 + Math.floor(rand() * content.symptoms.length)), ...extraSymptom])],
      unitModel: content.appliesTo[0]?.split(',')[0] ?? '', unitSerial: `SN${(100000 + Math.floor(rand() * 899999))}`, jobRef: `HL-${2600 + i}`,
      technicianId: technicianIds[Math.floor(rand() * technicianIds.length)]!, steps, path: followFlow(content.steps, verdicts).path, notes: '',
      causeProcedureId: causeKey ? proc.id : null, causeKey, outcome,
      parts: partsEur ? [{ name: content.parts[0]?.name ?? 'Replacement part', partNumber: content.parts[0]?.partNumber, cost: Math.round(partsEur * 100) / 100 }] : [],
      partsCostCents: Math.round(partsEur * 100), minutes,
      replacementCostCents: rand() < 0.85 ? Math.round(profile.replacementCostEur * 100) : null,
      photoIds: [], comeback: outcome === 'repaired' && rand() < profile.comebackRate,
      version: 3, startedAt: started, closedAt: new Date(started.getTime() + minutes * 60_000), createdAt: started,
    })
  }
  return rows
}

/** At least 200 closed repair records for the demo (`demoRecordRows`), only when the workshop has no records yet. */
export async function seedRecords(people: Record<DemoPerson, User>, count = 240): Promise<number> {
  if (await RepairRecord.count()) return 0
  const procs = await Procedure.findAll({ where: { slug: Object.keys(DEMO_RECORD_PROFILE), status: 'active' }, order: [['id', 'ASC']] })
  const revs = new Map((await Revision.findAll({ where: { id: procs.map(p => p.publishedRevisionId).filter((x): x is number => !!x) } })).map(r => [r.procedureId, r]))
  const usable = procs.filter(p => revs.has(p.id)).map(p => ({ id: p.id, slug: p.slug, revisionId: revs.get(p.id)!.id, content: revs.get(p.id)!.content }))
  const technicians = [people.ade, people.ade, people.mika, people.mika, people.tomasz].map(u => u.id)
  const rows = demoRecordRows(usable, technicians, count)
  await useDb().transaction(async (transaction) => {
    // One INSERT per record: bulkCreate numbers the rows of a multi-row INSERT consecutively
    // from the first id, which they are not where auto_increment_increment > 1 (a Galera
    // cluster interleaves its nodes' ids). Rows are built field by field above; the creation
    // type does not follow the JSON getters.
    const created: RepairRecord[] = []
    for (const row of rows) created.push(await RepairRecord.create(row as never, { transaction }))
    await RecordSymptom.bulkCreate(created.flatMap(r => r.symptoms.map(symptom => ({ recordId: r.id, symptom }))), { transaction })
  })
  await rebuildCauseCounts()
  await rebuildLearnedCounts()
  return rows.length
}
