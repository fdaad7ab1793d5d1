import { QueryTypes, type Sequelize } from 'sequelize'
import { expect } from 'vitest'
import type { ApiClient } from './api'
import { makeContent } from './content'

/** A procedure whose first revision awaits review, with a word found in nothing else. */
export async function procedureInReview(author: ApiClient, word: string) {
  const created = await author.post('/api/procedures', { content: makeContent({ title: `Hum from ${word} choke`, summary: `The ${word} winding.` }) })
  expect(created.status, JSON.stringify(created.body)).toBe(201)
  const { procedure, revision } = created.body as { procedure: { id: number, slug: string }, revision: { id: number } }
  expect((await author.post(`/api/revisions/${revision.id}/submit`)).status).toBe(200)
  return { procedure, revision }
}

/**
 * Publishes a revision in a transaction left open: the change-log row takes its id now, and
 * becomes visible only at `commit()`, after changes with higher ids have committed. The same
 * rows an approval writes (server/services/procedures/review.ts), in SQL, so the test decides
 * when it commits.
 */
export async function publishHeldOpen(db: Sequelize, target: { procedureId: number, revisionId: number, reviewerId: number }) {
  const transaction = await db.transaction()
  try {
    const q = (sql: string, replacements: unknown[]) => db.query(sql, { replacements, transaction, type: QueryTypes.RAW })
    await q('UPDATE revisions SET state = \'published\', reviewer_id = ?, decided_at = UTC_TIMESTAMP(), published_at = UTC_TIMESTAMP() WHERE id = ?', [target.reviewerId, target.revisionId])
    await q('UPDATE procedures SET published_revision_id = ? WHERE id = ?', [target.revisionId, target.procedureId])
    await q('INSERT INTO change_log (kind, procedure_id, created_at) VALUES (\'procedure\', ?, UTC_TIMESTAMP())', [target.procedureId])
    const [row] = await db.query<{ id: number }>('SELECT LAST_INSERT_ID() AS id', { transaction, type: QueryTypes.SELECT })
    return { changeId: Number(row!.id), commit: () => transaction.commit() }
  }
  catch (error) {
    await transaction.rollback()
    throw error
  }
}

/** The id of the newest change-log row about a procedure. */
export async function lastChangeOf(db: Sequelize, procedureId: number): Promise<number> {
  const [row] = await db.query<{ id: number }>('SELECT MAX(id) AS id FROM change_log WHERE procedure_id = ?', { replacements: [procedureId], type: QueryTypes.SELECT })
  return Number(row!.id)
}
