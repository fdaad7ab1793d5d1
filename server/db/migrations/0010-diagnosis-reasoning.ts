import { DataTypes, QueryTypes, type QueryInterface } from 'sequelize'
import { foldFailPointsTo, possibleVerdicts, isPassingVerdict } from '../../../shared/types/verdicts'
import type { ReasoningStep } from '../../../shared/types/verdicts'
import { followFlow, recordVerdicts } from '../../../shared/utils/diagnosis'
import { rebuildLearnedCounts } from '../../services/diagnosis/learned'

// Reasoning at the bench: revision content states what each verdict means (the failPointsTo
// shorthand written out, the same meaning); records keep each step's verdict and reading time,
// their path through a flow and the close form as it is filled in; the counts the live
// probabilities and step times read, per procedure, backfilled from the closed records.

type Json = Record<string, unknown>
type StoredContent = { steps?: Array<ReasoningStep & Json>, causes?: Json[] } & Json

const parse = <T>(value: unknown): T => (typeof value === 'string' ? JSON.parse(value) : value) as T

async function eachRow<T extends { id: number }>(q: QueryInterface, sql: string, fn: (rows: T[]) => Promise<void>) {
  for (let after = 0; ;) {
    const rows = await q.sequelize.query<T>(`${sql} AND id > :after ORDER BY id LIMIT 1000`, { type: QueryTypes.SELECT, replacements: { after } })
    if (!rows.length) return
    await fn(rows)
    after = rows[rows.length - 1]!.id
  }
}

const count = (columns: string[]) => Object.fromEntries(columns.map(c => [c, { type: DataTypes.INTEGER.UNSIGNED, allowNull: false, defaultValue: 0 }]))
const key = (length: number) => ({ type: DataTypes.STRING(length), allowNull: false, primaryKey: true })

export async function up({ context: q }: { context: QueryInterface }) {
  await eachRow<{ id: number, content: unknown }>(q, 'SELECT id, content FROM revisions WHERE 1 = 1', async (rows) => {
    for (const row of rows) {
      const content = parse<StoredContent>(row.content)
      if (!content.steps?.some(step => 'failPointsTo' in step)) continue
      content.steps = content.steps.map(step => foldFailPointsTo(step))
      await q.sequelize.query('UPDATE revisions SET content = ? WHERE id = ?', { type: QueryTypes.UPDATE, replacements: [JSON.stringify(content), row.id] })
    }
  })

  await q.addColumn('repair_records', 'path', { type: DataTypes.JSON, allowNull: true })
  await q.addColumn('repair_records', 'close_draft', { type: DataTypes.JSON, allowNull: true })
  const contents = new Map<number, StoredContent>()
  await eachRow<{ id: number, revision_id: number, steps: unknown }>(q, 'SELECT id, revision_id, steps FROM repair_records WHERE revision_id IS NOT NULL', async (rows) => {
    const missing = [...new Set(rows.map(r => r.revision_id))].filter(id => !contents.has(id))
    if (missing.length) {
      for (const rev of await q.sequelize.query<{ id: number, content: unknown }>('SELECT id, content FROM revisions WHERE id IN (:ids)', { type: QueryTypes.SELECT, replacements: { ids: missing } })) {
        contents.set(rev.id, parse<StoredContent>(rev.content))
      }
    }
    for (const row of rows) {
      const steps = parse<Record<string, Json & { value?: string }>>(row.steps) ?? {}
      const guide = contents.get(row.revision_id)?.steps ?? []
      const verdicts = recordVerdicts(guide, steps)
      for (const [stepKey, entry] of Object.entries(steps)) {
        entry.verdict = verdicts[stepKey] ?? null
        entry.readAt ??= null
      }
      const path = followFlow(guide, verdicts).path
      await q.sequelize.query('UPDATE repair_records SET steps = ?, path = ? WHERE id = ?', { type: QueryTypes.UPDATE, replacements: [JSON.stringify(steps), JSON.stringify(path), row.id] })
    }
  })

  const procedure = { type: DataTypes.INTEGER.UNSIGNED, allowNull: false, primaryKey: true, references: { model: 'procedures', key: 'id' } }
  await q.createTable('learned_causes', { procedure_id: procedure, cause_key: key(40), ...count(['n']) })
  await q.createTable('learned_verdicts', { procedure_id: procedure, step_key: key(40), verdict: key(8), cause_key: key(40), ...count(['n']) })
  await q.createTable('learned_minutes', { procedure_id: procedure, step_key: key(40), minutes: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false, primaryKey: true }, ...count(['n']) })
  await q.createTable('learned_branches', { procedure_id: procedure, step_key: key(40), verdict: key(8), ...count(['taken', 'confirmed']) })
  await rebuildLearnedCounts(q.sequelize)
}

export async function down({ context: q }: { context: QueryInterface }) {
  for (const table of ['learned_branches', 'learned_minutes', 'learned_verdicts', 'learned_causes']) await q.dropTable(table)
  // Typed rather than through removeColumn (DEVELOPERS.md, raw SQL).
  await q.sequelize.query('ALTER TABLE repair_records DROP COLUMN close_draft, DROP COLUMN path', { type: QueryTypes.UPDATE })
  // Earlier code reads failPointsTo only: give every step the causes of its failing verdicts
  // (the verdict map stays, and is ignored there).
  await eachRow<{ id: number, content: unknown }>(q, 'SELECT id, content FROM revisions WHERE 1 = 1', async (rows) => {
    for (const row of rows) {
      const content = parse<StoredContent>(row.content)
      let changed = false
      for (const step of content.steps ?? []) {
        if (step.failPointsTo || !step.verdicts) continue
        const failing = possibleVerdicts(step).filter(v => !isPassingVerdict(step, v)).flatMap(v => step.verdicts?.[v]?.causes ?? [])
        if (failing.length) step.failPointsTo = [...new Set(failing)]
        changed ||= failing.length > 0
      }
      if (changed) await q.sequelize.query('UPDATE revisions SET content = ? WHERE id = ?', { type: QueryTypes.UPDATE, replacements: [JSON.stringify(content), row.id] })
    }
  })
}
