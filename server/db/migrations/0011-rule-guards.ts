import { QueryTypes, type QueryInterface } from 'sequelize'

// Rules that must hold on a Galera cluster, where row locks bind only the node that took them
// and certification orders only the rows a transaction writes:
// - one open draft per author and procedure: a unique index over a column that is the author
//   for a draft and NULL otherwise (NULLs never collide), so the database itself refuses a
//   second draft, through whichever node it comes;
// - rules over many rows (at least one active admin): a guard row that every transaction which
//   could break the rule writes, so two of them through different nodes conflict.
export async function up({ context: q }: { context: QueryInterface }) {
  const twice = await q.sequelize.query<{ procedureId: number, authorId: number, ids: string }>(
    `SELECT procedure_id AS procedureId, author_id AS authorId, GROUP_CONCAT(id ORDER BY id) AS ids
     FROM revisions WHERE state = 'draft' GROUP BY procedure_id, author_id HAVING COUNT(*) > 1`,
    { type: QueryTypes.SELECT },
  )
  if (twice.length) {
    // Drafts are an author's unsaved-elsewhere work: which one to keep is theirs to say.
    throw new Error(`Authors with more than one open draft of a procedure (procedure/author: draft ids): ${twice.map(t => `${t.procedureId}/${t.authorId}: ${t.ids}`).join('; ')}. Submit all but one of each (an editor can then reject what is not wanted), then migrate again.`)
  }
  await q.sequelize.query(
    `ALTER TABLE revisions
       ADD COLUMN open_draft_author INT UNSIGNED AS (IF(state = 'draft', author_id, NULL)) PERSISTENT,
       ADD UNIQUE INDEX revisions_one_open_draft (procedure_id, open_draft_author)`,
    { type: QueryTypes.RAW },
  )
  await q.sequelize.query(
    `CREATE TABLE rule_guards (
       name VARCHAR(40) NOT NULL PRIMARY KEY,
       version BIGINT UNSIGNED NOT NULL DEFAULT 0
     ) ENGINE=InnoDB DEFAULT CHARSET=utf8mb4`,
    { type: QueryTypes.RAW },
  )
  await q.sequelize.query('INSERT INTO rule_guards (name, version) VALUES (\'active-admins\', 0)', { type: QueryTypes.INSERT })
}

export async function down({ context: q }: { context: QueryInterface }) {
  await q.sequelize.query('DROP TABLE rule_guards', { type: QueryTypes.RAW })
  await q.sequelize.query('ALTER TABLE revisions DROP INDEX revisions_one_open_draft, DROP COLUMN open_draft_author', { type: QueryTypes.RAW })
}
