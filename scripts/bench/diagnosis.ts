// npm run bench:diagnosis — 100,000 synthetic closed repair records (readings that agree with
// their causes, timed step by step) in a fresh MariaDB, then the live diagnosis of records in
// progress and the evidence ranking for the same records, timed over repeated calls in one run.
// Target (QUALITY): GET /api/records/[id]/diagnosis p95 ≤ 20 ms server-side at 100k records.
import { performance } from 'node:perf_hooks'
import { QueryTypes } from 'sequelize'
import { RecordSymptom, RepairRecord } from '../../server/db'
import { DEMO_RECORD_PROFILE } from '../seed/demo-content'
import { demoSteps, demoVerdicts } from '../seed/record-readings'
import { rebuildCauseCounts } from '../../server/services/evidence/counts'
import { evidenceFor } from '../../server/services/evidence/ranking'
import { rebuildLearnedCounts } from '../../server/services/diagnosis/learned'
import { diagnoseRecord } from '../../server/services/diagnosis/record'
import { followFlow } from '../../shared/utils/diagnosis'
import { openBenchDatabase, timings } from '../lib/bench-stack'
import { seedBenchWorkshop } from './demo-workshop'
import { seededRandom } from '../../shared/utils/random'

const N = Number(process.env.BENCH_RECORDS ?? 100_000)
const rand = seededRandom(42)

const bench = await openBenchDatabase()
try {
  const { live, techs } = await seedBenchWorkshop()
  const pick = <T>(xs: T[]) => xs[Math.floor(rand() * xs.length)]!

  function recordOf(closed: boolean) {
    const { rev, proc } = pick(live)
    const content = rev.content
    const causes = Object.entries(DEMO_RECORD_PROFILE[proc.slug]!.causes)
    let x = rand()
    const listed = rand() < 0.92
    const key = listed ? causes.find(([, w]) => (x -= w) <= 0)?.[0] ?? causes[0]![0] : null
    const started = new Date(Date.now() - rand() * 3 * 365 * 86_400_000)
    let verdicts = demoVerdicts(content.steps, key, false)
    // A record in progress has read its first steps only.
    if (!closed) verdicts = Object.fromEntries(Object.entries(verdicts).slice(0, 1 + Math.floor(rand() * 2)))
    const { steps, minutes } = demoSteps(content.steps, verdicts, started, rand)
    return {
      status: closed ? 'closed' as const : 'in_progress' as const, procedureId: proc.id, revisionId: rev.id, deviceType: content.deviceType,
      symptoms: content.symptoms.filter(() => rand() < 0.8).concat(content.symptoms[0]!).filter((s, i, a) => a.indexOf(s) === i),
      technicianId: pick(techs).id, steps, path: followFlow(content.steps, verdicts).path,
      causeProcedureId: closed && key ? proc.id : null, causeKey: closed ? key : null, outcome: closed ? (key ? 'repaired' as const : 'no_fault_found' as const) : null,
      minutes: closed ? minutes + 5 : null, replacementCostCents: 3000, startedAt: started, closedAt: closed ? new Date(started.getTime() + (minutes + 5) * 60_000) : null,
    }
  }

  const t0 = performance.now()
  for (let done = 0; done < N; done += 5000) {
    const rows = Array.from({ length: Math.min(5000, N - done) }, () => recordOf(true))
    const created = await RepairRecord.bulkCreate(rows as never[], { returning: true })
    await RecordSymptom.bulkCreate(created.flatMap(r => r.symptoms.map(symptom => ({ recordId: r.id, symptom }))))
  }
  const loadMs = performance.now() - t0
  const t1 = performance.now()
  await rebuildCauseCounts()
  await rebuildLearnedCounts()
  const rebuildMs = performance.now() - t1
  const open = await RepairRecord.bulkCreate(Array.from({ length: 60 }, () => recordOf(false)) as never[], { returning: true })
  await RecordSymptom.bulkCreate(open.flatMap(r => r.symptoms.map(symptom => ({ recordId: r.id, symptom }))))
  await bench.sequelize.query('ANALYZE TABLE repair_records, record_symptoms, cause_counts, learned_causes, learned_verdicts, learned_minutes, learned_branches', { type: QueryTypes.SELECT })

  for (const r of open.slice(0, 5)) await diagnoseRecord(r.id) // warm-up
  const diagnosis: number[] = []
  const evidence: number[] = []
  for (let round = 0; round < 10; round++) {
    for (const r of open) {
      let t = performance.now()
      await diagnoseRecord(r.id)
      diagnosis.push(performance.now() - t)
      t = performance.now()
      await evidenceFor({ deviceType: r.deviceType, symptoms: r.symptoms, procedureId: r.procedureId! })
      evidence.push(performance.now() - t)
    }
  }
  const d = timings(diagnosis)
  const e = timings(evidence)
  const fmt = (x: number) => x.toFixed(1).padStart(8)
  console.log(`\nBenchlore diagnosis benchmark — ${N.toLocaleString('en')} closed records loaded in ${(loadMs / 1000).toFixed(1)} s; counts rebuilt in ${(rebuildMs / 1000).toFixed(1)} s\n`)
  console.log('what                                         n     p50 ms   p95 ms   max ms   target')
  console.log(`live diagnosis of a record in progress  ${String(d.n).padStart(6)}${fmt(d.p50)} ${fmt(d.p95)} ${fmt(d.max)}   p95 ≤ 20 ms ${d.p95 <= 20 ? '✓' : '✗'}`)
  console.log(`evidence ranking, same records          ${String(e.n).padStart(6)}${fmt(e.p50)} ${fmt(e.p95)} ${fmt(e.max)}   (reported)`)
  console.log(`\ndiagnosis / evidence at p95: ${(d.p95 / e.p95).toFixed(2)}×`)
}
finally {
  await bench.stop()
}
