import { execFileSync } from 'node:child_process'
import { join } from 'node:path'
import { QueryTypes } from 'sequelize'
import { describe, expect, it } from 'vitest'
import { createSequelize, dbConfigFromEnv } from '../../server/db'
import { LEASE_TABLE } from '../../server/db/lease'
import { createMigrator, migrateUp } from '../../server/db/migrate'
import { MIGRATIONS } from '../../server/db/migrations'
import { testProfile } from '../../scripts/lib/stack'

const SCRATCH = 'benchlore_migration_check'

function asRoot(sql: string) {
  const socket = join(testProfile().dataDir, 'mariadb', 'mysqld.sock')
  execFileSync('mariadb', ['--no-defaults', `--socket=${socket}`, '-uroot', '-e', sql])
}

describe('migrations', () => {
  it('run up from an empty database, down to nothing, and up again', async () => {
    const cfg = dbConfigFromEnv()
    asRoot(`DROP DATABASE IF EXISTS ${SCRATCH}; CREATE DATABASE ${SCRATCH} CHARACTER SET utf8mb4; GRANT ALL ON ${SCRATCH}.* TO '${cfg.user}'@'127.0.0.1';`)
    const sequelize = createSequelize({ ...cfg, name: SCRATCH })
    try {
      const tables = async () => (await sequelize.query<{ t: string }>('SELECT table_name AS t FROM information_schema.tables WHERE table_schema = ?', { replacements: [SCRATCH], type: QueryTypes.SELECT })).map(r => r.t).sort()
      expect(await tables()).toEqual([])
      const applied = await migrateUp(sequelize)
      expect(applied).toEqual(MIGRATIONS.map(m => m.name))
      expect(await tables()).toEqual(expect.arrayContaining(['users', 'invitations', 'login_failures', 'audit_events', 'outbox_messages', 'schema_migrations']))
      expect(await migrateUp(sequelize), 'a second run applies nothing').toEqual([])
      await createMigrator(sequelize).down({ to: 0 })
      // What is left is the bookkeeping: the applied list and the migration lease's table (server/db/lease.ts).
      expect(await tables()).toEqual([LEASE_TABLE, 'schema_migrations'].sort())
      expect(await migrateUp(sequelize)).toHaveLength(MIGRATIONS.length)
    }
    finally {
      await sequelize.close()
      asRoot(`DROP DATABASE IF EXISTS ${SCRATCH}`)
    }
  })
})
