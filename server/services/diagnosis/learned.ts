import { QueryTypes, type Sequelize, type Transaction } from 'sequelize'
import type { RevisionContent } from '../../../shared/types/procedure'
import type { StepVerdict } from '../../../shared/types/verdicts'
import { emptyStats, recordContribution } from '../../../shared/utils/diagnosis'
import type { LearnedStats, RecordContribution } from '../../../shared/utils/diagnosis'
import { useDb } from '../../db'
import type { StoredStep } from '../../db/models/repair-record'

// What closed records teach a procedure's reasoning, kept as running counts per procedure in
// four tables (learned_causes, learned_verdicts, learned_minutes, learned_branches), moved in
// the transaction that closes or amends a record, as cause_counts is. The reasoning reads one
// procedure's rows by its id: a few hundred rows whatever the number of records.

/** The parts of a repair record its contribution depends on. */
export interface LearningRecord {
  procedureId: number | null
  causeProcedureId: number | null
  causeKey: string | null
  outcome: string | null
  steps: Record<string, StoredStep>
  startedAt: Date | string
}

/**
 * One closed record's share of its guide procedure's counts (null for a record without a guide):
 * the cause it confirmed (or "not listed"), each step's verdict, each timed step's minutes and,
 * in a flow, the branches on its path.
 */
export function contributionOf(r: LearningRecord, content: Pick<RevisionContent, 'steps' | 'causes'>): RecordContribution | null {
  if (r.procedureId === null) return null
  const readingTimes = Object.entries(r.steps)
    .filter(([, s]) => s.readAt)
    .map(([stepKey, s]) => ({ stepKey, at: s.readAt! }))
  return recordContribution({
    steps: content.steps,
    causes: content.causes,
    entries: r.steps,
    confirmedCause: r.causeProcedureId === r.procedureId ? r.causeKey : null,
    outcome: r.outcome ?? undefined,
    startedAt: r.startedAt,
    readingTimes,
  })
}

/** One table's rows: key columns, then the counts. */
const TABLES = {
  causes: { table: 'learned_causes', keys: ['procedure_id', 'cause_key'], counts: ['n'] },
  verdicts: { table: 'learned_verdicts', keys: ['procedure_id', 'step_key', 'verdict', 'cause_key'], counts: ['n'] },
  minutes: { table: 'learned_minutes', keys: ['procedure_id', 'step_key', 'minutes'], counts: ['n'] },
  branches: { table: 'learned_branches', keys: ['procedure_id', 'step_key', 'verdict'], counts: ['taken', 'confirmed'] },
} as const
type Kind = keyof typeof TABLES
type Row = Array<string | number>

/** Rows of the four tables, summed by key as contributions are added. */
class Tally {
  readonly rows: Record<Kind, Map<string, Row>> = { causes: new Map(), verdicts: new Map(), minutes: new Map(), branches: new Map() }

  add(kind: Kind, key: Row, counts: number[]) {
    const id = key.join('\u0000')
    const row = this.rows[kind].get(id)
    if (!row) this.rows[kind].set(id, [...key, ...counts])
    else counts.forEach((n, i) => (row[key.length + i] = (row[key.length + i] as number) + n))
  }

  contribution(procedureId: number, c: RecordContribution) {
    this.add('causes', [procedureId, c.cause], [1])
    for (const [step, verdict] of Object.entries(c.verdicts)) this.add('verdicts', [procedureId, step, verdict, c.cause], [1])
    for (const [step, m] of Object.entries(c.minutes)) this.add('minutes', [procedureId, step, m], [1])
    for (const b of c.branches) this.add('branches', [procedureId, b.stepKey, b.verdict], [1, b.confirmed ? 1 : 0])
    return this
  }
}

/** Adds the tally's counts to the tables, a row created where there is none. */
async function addRows(db: Sequelize, tally: Tally, transaction: Transaction) {
  for (const kind of Object.keys(TABLES) as Kind[]) {
    const { table, keys, counts } = TABLES[kind]
    const rows = [...tally.rows[kind].values()]
    const tuple = `(${[...keys, ...counts].map(() => '?').join(', ')})`
    const update = counts.map(c => `${c} = ${c} + VALUES(${c})`).join(', ')
    for (let i = 0; i < rows.length; i += 1000) {
      const chunk = rows.slice(i, i + 1000)
      await db.query(`INSERT INTO ${table} (${[...keys, ...counts].join(', ')}) VALUES ${chunk.map(() => tuple).join(', ')} ON DUPLICATE KEY UPDATE ${update}`, { type: QueryTypes.INSERT, replacements: chunk.flat(), transaction })
    }
  }
}

/** Takes the tally's counts away from the rows that hold them (never below 0). */
async function subtractRows(db: Sequelize, tally: Tally, transaction: Transaction) {
  for (const kind of Object.keys(TABLES) as Kind[]) {
    const { table, keys, counts } = TABLES[kind]
    for (const row of tally.rows[kind].values()) {
      const set = counts.map((c, i) => `${c} = GREATEST(0, CAST(${c} AS SIGNED) - ${Number(row[keys.length + i])})`).join(', ')
      await db.query(`UPDATE ${table} SET ${set} WHERE ${keys.map(k => `${k} = ?`).join(' AND ')}`, { type: QueryTypes.UPDATE, replacements: row.slice(0, keys.length), transaction })
    }
  }
}

/**
 * Adds (+1) or takes away (−1) one closed record's contribution, in the transaction that closes
 * or amends it.
 */
export async function adjustLearnedCounts(procedureId: number, c: RecordContribution, delta: 1 | -1, transaction: Transaction): Promise<void> {
  const tally = new Tally().contribution(procedureId, c)
  if (delta > 0) await addRows(useDb(), tally, transaction)
  else await subtractRows(useDb(), tally, transaction)
}

interface StatsRow { k: 'c' | 'v' | 'm' | 'b', a: string, b: string, c: string, n: number, m: number }

/**
 * The counts learned from the closed records of one procedure, in one query over the four
 * tables by their primary key's first column.
 */
export async function learnedStats(procedureId: number): Promise<LearnedStats> {
  const rows = await useDb().query<StatsRow>(
    `SELECT 'c' AS k, cause_key AS a, '' AS b, '' AS c, n, 0 AS m FROM learned_causes WHERE procedure_id = :p
     UNION ALL SELECT 'v', step_key, verdict, cause_key, n, 0 FROM learned_verdicts WHERE procedure_id = :p
     UNION ALL SELECT 'm', step_key, '', '', n, minutes FROM learned_minutes WHERE procedure_id = :p
     UNION ALL SELECT 'b', step_key, verdict, '', taken, confirmed FROM learned_branches WHERE procedure_id = :p`,
    { type: QueryTypes.SELECT, raw: true, replacements: { p: procedureId } },
  )
  const stats = emptyStats()
  for (const row of rows) {
    const n = Number(row.n)
    const verdict = row.b as StepVerdict
    if (row.k === 'c') {
      stats.records += n
      if (row.a === '_unlisted') stats.unlisted += n
    }
    else if (row.k === 'v') {
      if (n > 0) ((stats.verdicts[row.a] ??= {})[verdict] ??= {})[row.c] = n
    }
    else if (row.k === 'm') {
      if (n > 0) (stats.minutes[row.a] ??= {})[String(row.m)] = n
    }
    else if (n > 0) {
      (stats.branches[row.a] ??= {})[verdict] = { taken: n, confirmed: Number(row.m) }
    }
  }
  return stats
}

interface ClosedRow { id: number, procedure_id: number, revision_id: number, cause_procedure_id: number | null, cause_key: string | null, outcome: string | null, steps: unknown, started_at: Date }

/**
 * Recomputes every learned count from the closed records (after bulk loads, in the migration
 * that creates the tables; also a repair tool). Takes the connection to use, since a migration
 * runs on its own.
 */
export async function rebuildLearnedCounts(db: Sequelize = useDb()): Promise<void> {
  await db.transaction(async (transaction) => {
    for (const { table } of Object.values(TABLES)) await db.query(`DELETE FROM ${table}`, { type: QueryTypes.DELETE, transaction })
    const contents = new Map<number, Pick<RevisionContent, 'steps' | 'causes'> | null>()
    const tally = new Tally()
    for (let after = 0; ;) {
      const batch = await db.query<ClosedRow>(
        `SELECT id, procedure_id, revision_id, cause_procedure_id, cause_key, outcome, steps, started_at FROM repair_records
         WHERE status = 'closed' AND procedure_id IS NOT NULL AND revision_id IS NOT NULL AND id > :after ORDER BY id LIMIT 2000`,
        { type: QueryTypes.SELECT, raw: true, replacements: { after }, transaction },
      )
      if (!batch.length) break
      after = batch[batch.length - 1]!.id
      const missing = [...new Set(batch.map(r => r.revision_id))].filter(id => !contents.has(id))
      if (missing.length) {
        const revs = await db.query<{ id: number, content: unknown }>('SELECT id, content FROM revisions WHERE id IN (:ids)', { type: QueryTypes.SELECT, raw: true, replacements: { ids: missing }, transaction })
        for (const id of missing) contents.set(id, null)
        for (const rev of revs) contents.set(rev.id, parseJson(rev.content))
      }
      for (const r of batch) {
        const content = contents.get(r.revision_id)
        const c = content && contributionOf({ procedureId: r.procedure_id, causeProcedureId: r.cause_procedure_id, causeKey: r.cause_key, outcome: r.outcome, steps: parseJson(r.steps) ?? {}, startedAt: r.started_at }, content)
        if (c) tally.contribution(r.procedure_id, c)
      }
    }
    await addRows(db, tally, transaction)
  })
}

function parseJson<T>(value: unknown): T | null {
  if (value === null || value === undefined) return null
  return (typeof value === 'string' ? JSON.parse(value) : value) as T
}
