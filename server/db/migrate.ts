import type { Sequelize } from 'sequelize'
import { SequelizeStorage, Umzug } from 'umzug'
import { MIGRATIONS } from './migrations'

export function createMigrator(sequelize: Sequelize) {
  return new Umzug({
    migrations: MIGRATIONS.map(m => ({ name: m.name, up: m.up, down: m.down })),
    context: sequelize.getQueryInterface(),
    storage: new SequelizeStorage({ sequelize, tableName: 'schema_migrations' }),
    logger: undefined,
  })
}

/**
 * Applies pending migrations under a named MariaDB lock, so two processes started together
 * (two app instances, a deploy and a script) never run the same migration twice.
 */
export async function migrateUp(sequelize: Sequelize): Promise<string[]> {
  // GET_LOCK belongs to one connection, so hold it on a connection of its own, outside the pool's rotation.
  const manager = (sequelize as unknown as { connectionManager: LockConnectionManager }).connectionManager
  const conn = await manager.getConnection({ type: 'write' })
  try {
    const [lock] = await conn.query('SELECT GET_LOCK(\'benchlore_migrations\', 60) AS got')
    if (!lock || Number(lock.got) !== 1) throw new Error('could not take the migration lock within 60 s')
    try {
      const applied = await createMigrator(sequelize).up()
      return applied.map(m => m.name)
    }
    finally {
      await conn.query('SELECT RELEASE_LOCK(\'benchlore_migrations\')')
    }
  }
  finally {
    manager.releaseConnection(conn)
  }
}

interface LockConnectionManager {
  getConnection(opts: { type: 'read' | 'write' }): Promise<{ query: (sql: string) => Promise<Array<{ got?: number }>> }>
  releaseConnection(conn: unknown): void
}
