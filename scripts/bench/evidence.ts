// npm run bench:evidence — 100,000 synthetic closed repair records in a fresh MariaDB, then the
// evidence ranking and the filtered records list, timed over repeated queries in one run.
// Target (QUALITY): evidence p95 ≤ 20 ms at 100k records.
import { performance } from 'node:perf_hooks'
import { QueryTypes } from 'sequelize'
import { RecordSymptom, RepairRecord } from '../../server/db'
import { DEMO_RECORD_PROFILE } from '../seed/demo-content'
import { rebuildCauseCounts } from '../../server/services/evidence/counts'
import { evidenceFor } from '../../server/services/evidence/ranking'
import { listRecords } from '../../server/services/records/listing'
import { RecordListQuery } from '../../shared/types/records'
import { openBenchDatabase, timings } from '../lib/bench-stack'
import { seedBenchWorkshop } from './demo-workshop'
import { seededRandom } from '../../shared/utils/random'

const N = Number(process.env.BENCH_RECORDS ?? 100_000)
const rand = seededRandom(42)

const bench = await openBenchDatabase()
try {
  const { live, techs } = await seedBenchWorkshop()

  const t0 = performance.now()
  for (let done = 0; done < N; done += 5000) {
    const rows = Array.from({ length: Math.min(5000, N - done) }, () => {
      const { rev, proc } = live[Math.floor(rand() * live.length)]!
      const causes = Object.entries(DEMO_RECORD_PROFILE[proc.slug]!.causes)
      let x = rand()
      const key = causes.find(([, w]) => (x -= w) <= 0)?.[0] ?? causes[0]![0]
      const started = new Date(Date.now() - rand() * 3 * 365 * 86_400_000)
      return {
        status: 'closed' as const, procedureId: proc.id, revisionId: rev.id, deviceType: rev.content.deviceType,
        symptoms: rev.content.symptoms.filter(() => rand() < 0.8).concat(rev.content.symptoms[0]!).filter((s, i, a) => a.indexOf(s) === i),
        technicianId: techs[Math.floor(rand() * techs.length)]!.id, causeProcedureId: rand() < 0.9 ? proc.id : null,
        causeKey: key, outcome: 'repaired' as const, minutes: 20 + Math.floor(rand() * 60), replacementCostCents: 3000,
        startedAt: started, closedAt: started,
      }
    }).map(r => ({ ...r, causeKey: r.causeProcedureId ? r.causeKey : null, outcome: r.causeProcedureId ? r.outcome : 'no_fault_found' as const }))
    const created = await RepairRecord.bulkCreate(rows as never[], { returning: true })
    await RecordSymptom.bulkCreate(created.flatMap(r => r.symptoms.map(symptom => ({ recordId: r.id, symptom }))))
  }
  await rebuildCauseCounts()
  const loadMs = performance.now() - t0
  await bench.sequelize.query('ANALYZE TABLE repair_records, record_symptoms', { type: QueryTypes.SELECT })

  const queries = live.flatMap(({ rev, proc }) => [
    { deviceType: rev.content.deviceType, symptoms: rev.content.symptoms.slice(0, 1), procedureId: proc.id },
    { deviceType: rev.content.deviceType, symptoms: rev.content.symptoms, procedureId: undefined },
  ])
  for (const q of queries.slice(0, 5)) await evidenceFor(q) // warm-up
  const evidence: number[] = []
  for (let round = 0; round < 10; round++) {
    for (const q of queries) {
      const t = performance.now()
      await evidenceFor(q)
      evidence.push(performance.now() - t)
    }
  }
  const listQueries = live.map(({ rev }) => RecordListQuery.parse({ deviceType: rev.content.deviceType, symptom: rev.content.symptoms[0], outcome: 'repaired', sort: '-closedAt', pageSize: 25 }))
  const list: number[] = []
  for (let round = 0; round < 5; round++) {
    for (const q of listQueries) {
      const t = performance.now()
      await listRecords(q)
      list.push(performance.now() - t)
    }
  }
  const e = timings(evidence)
  const l = timings(list)
  const fmt = (x: number) => x.toFixed(1).padStart(8)
  console.log(`\nBenchlore evidence benchmark — ${N.toLocaleString('en')} closed records loaded in ${(loadMs / 1000).toFixed(1)} s\n`)
  console.log('what                                         n     p50 ms   p95 ms   max ms   target')
  console.log(`evidence ranking (one aggregate query)  ${String(e.n).padStart(6)}${fmt(e.p50)} ${fmt(e.p95)} ${fmt(e.max)}   p95 ≤ 20 ms ${e.p95 <= 20 ? '✓' : '✗'}`)
  console.log(`records list, 3 filters, page of 25     ${String(l.n).padStart(6)}${fmt(l.p50)} ${fmt(l.p95)} ${fmt(l.max)}   (reported)`)
}
finally {
  await bench.stop()
}
