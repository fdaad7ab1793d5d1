import { QueryTypes, type Sequelize, type Transaction } from 'sequelize'
import { useDb } from './index'

/**
 * Rows of `rule_guards` exist to be written. A rule checked over many rows ("at least one
 * active admin") is held on one server by locking the rows it reads, but a Galera cluster
 * orders only the rows a transaction writes: certification fails the later of two commits that
 * wrote the same row (as a deadlock, which `inTransaction` re-runs). So every transaction that
 * could break such a rule also writes the rule's guard row; two of them through different nodes
 * then cannot both commit, and the one re-run sees the other's change.
 */
export type RuleGuard = 'active-admins'

/** `db` is the connection `transaction` belongs to: the app's own unless given. */
export async function writeRuleGuard(name: RuleGuard, transaction: Transaction, db: Sequelize = useDb()): Promise<void> {
  // An upsert: the guard holds even where its row is missing.
  await db.query(
    'INSERT INTO rule_guards (name, version) VALUES (?, 1) ON DUPLICATE KEY UPDATE version = version + 1',
    { replacements: [name], transaction, type: QueryTypes.INSERT },
  )
}
