import { QueryTypes } from 'sequelize'
import type { DashboardDto, Outcome } from '../../../shared/types/records'
import { DeviceType, Procedure, Revision, Symptom, useDb } from '../../db'
import { reasoningFigures } from './reasoning'

type Row = Record<string, string | number | null>

/**
 * The team's figures over a date range (records started in it), from aggregate SQL only.
 * `technicianId` narrows every figure to one person (what a technician sees of their own work).
 */
export async function dashboard(range: { from: Date, to: Date }, technicianId?: number): Promise<DashboardDto> {
  const db = useDb()
  const scope = technicianId ? 'AND r.technician_id = :tech' : ''
  const replacements = { from: range.from, to: range.to, tech: technicianId ?? 0 }
  const q = (sql: string) => db.query<Row>(sql, { type: QueryTypes.SELECT, replacements })
  const base = `FROM repair_records r WHERE r.started_at >= :from AND r.started_at < :to ${scope}`
  const [weekly, symptoms, causes, outcomes, minutes, comebacks, costs, reasoning] = await Promise.all([
    q(`SELECT DATE_FORMAT(DATE_SUB(DATE(r.started_at), INTERVAL WEEKDAY(r.started_at) DAY), '%Y-%m-%d') AS week, COUNT(*) AS n ${base} GROUP BY week ORDER BY week`),
    q(`SELECT s.symptom AS slug, COUNT(*) AS n FROM record_symptoms s JOIN repair_records r ON r.id = s.record_id WHERE r.started_at >= :from AND r.started_at < :to ${scope} GROUP BY s.symptom ORDER BY n DESC LIMIT 10`),
    q(`SELECT r.device_type AS dt, r.cause_procedure_id AS pid, r.cause_key AS ck, COUNT(*) AS n ${base} AND r.status = 'closed' AND r.cause_key IS NOT NULL GROUP BY dt, pid, ck ORDER BY n DESC LIMIT 40`),
    q(`SELECT r.outcome AS outcome, COUNT(*) AS n ${base} AND r.status = 'closed' GROUP BY r.outcome`),
    q(`SELECT r.procedure_id AS pid, r.minutes AS m ${base} AND r.status = 'closed' AND r.minutes IS NOT NULL AND r.procedure_id IS NOT NULL ORDER BY pid, m`),
    q(`SELECT SUM(r.comeback) AS back, COUNT(*) AS n ${base} AND r.status = 'closed'`),
    q(`SELECT SUM(r.parts_cost_cents) AS repair, SUM(r.replacement_cost_cents) AS replace_, COUNT(*) AS n ${base} AND r.status = 'closed' AND r.outcome = 'repaired' AND r.replacement_cost_cents IS NOT NULL`),
    reasoningFigures(),
  ])
  const procIds = [...new Set([...causes.map(c => Number(c.pid)), ...minutes.map(m => Number(m.pid))])]
  const [procs, types, symptomRows] = await Promise.all([
    Procedure.findAll({ where: { id: procIds }, attributes: ['id', 'slug', 'publishedRevisionId'] }),
    DeviceType.findAll({ attributes: ['slug', 'name'], raw: true }),
    Symptom.findAll({ attributes: ['slug', 'name'], raw: true }),
  ])
  const revs = await Revision.findAll({ where: { id: procs.map(p => p.publishedRevisionId).filter((x): x is number => !!x) } })
  const contentOf = new Map(revs.map(r => [r.procedureId, r.content]))
  const slugOf = new Map(procs.map(p => [p.id, p.slug]))
  const typeName = new Map(types.map(t => [t.slug, t.name]))
  const symptomName = new Map(symptomRows.map(s => [s.slug, s.name]))

  const perProc = new Map<number, number[]>()
  for (const m of minutes) perProc.set(Number(m.pid), [...(perProc.get(Number(m.pid)) ?? []), Number(m.m)])
  const median = (xs: number[]) => (xs.length % 2 ? xs[(xs.length - 1) / 2]! : (xs[xs.length / 2 - 1]! + xs[xs.length / 2]!) / 2)
  const outcomeCounts = outcomes.map(o => ({ outcome: o.outcome as Outcome, count: Number(o.n) }))
  const closed = outcomeCounts.reduce((s, o) => s + o.count, 0)
  const repaired = outcomeCounts.find(o => o.outcome === 'repaired')?.count ?? 0
  const cb = comebacks[0] ?? {}
  const cost = costs[0] ?? {}
  return {
    scope: technicianId ? 'mine' : 'team',
    range: { from: range.from.toISOString(), to: range.to.toISOString() },
    weekly: weekly.map(w => ({ week: String(w.week), records: Number(w.n) })),
    topSymptoms: symptoms.map(s => ({ slug: String(s.slug), name: symptomName.get(String(s.slug)) ?? String(s.slug), count: Number(s.n) })),
    causesByDeviceType: causes.map(c => ({
      deviceType: String(c.dt),
      deviceTypeName: typeName.get(String(c.dt)) ?? String(c.dt),
      cause: `${slugOf.get(Number(c.pid)) ?? c.pid}:${c.ck}`,
      label: contentOf.get(Number(c.pid))?.causes.find(x => x.key === c.ck)?.name ?? String(c.ck),
      count: Number(c.n),
    })),
    outcomes: outcomeCounts,
    repairRate: closed ? repaired / closed : null,
    medianMinutesByProcedure: [...perProc].map(([pid, xs]) => ({ slug: slugOf.get(pid) ?? String(pid), title: contentOf.get(pid)?.title ?? String(pid), median: median(xs), records: xs.length }))
      .sort((a, b) => b.records - a.records),
    comebacks: { count: Number(cb.back ?? 0), rate: Number(cb.n ?? 0) ? Number(cb.back ?? 0) / Number(cb.n) : null },
    costs: { repairTotal: Number(cost.repair ?? 0) / 100, replacementTotal: Number(cost.replace_ ?? 0) / 100, comparedRecords: Number(cost.n ?? 0) },
    keptOutOfWaste: repaired,
    ...reasoning,
  }
}
