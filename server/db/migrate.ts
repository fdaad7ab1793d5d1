import type { Sequelize } from 'sequelize'
import { SequelizeStorage, Umzug } from 'umzug'
import { withLease } from './lease'
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
 * Applies pending migrations under a lease row (server/db/lease.ts), so two processes started
 * together (two app instances, a deploy and a script), on one server or on different nodes of a
 * Galera cluster, never run the same migration twice; a crashed holder's lease expires.
 */
export async function migrateUp(sequelize: Sequelize): Promise<string[]> {
  return await withLease(sequelize, 'migrations', async () => {
    const applied = await createMigrator(sequelize).up()
    return applied.map(m => m.name)
  })
}
