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

/** A scratch database for one test, dropped afterwards. */
async function withScratch(fn: (sequelize: ReturnType<typeof createSequelize>) => Promise<void>) {
  const cfg = dbConfigFromEnv()
  asRoot(`DROP DATABASE IF EXISTS ${SCRATCH}; CREATE DATABASE ${SCRATCH} CHARACTER SET utf8mb4; GRANT ALL ON ${SCRATCH}.* TO '${cfg.user}'@'127.0.0.1';`)
  const sequelize = createSequelize({ ...cfg, name: SCRATCH })
  try {
    await fn(sequelize)
  }
  finally {
    await sequelize.close()
    asRoot(`DROP DATABASE IF EXISTS ${SCRATCH}`)
  }
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

  it('writes failPointsTo out per verdict and counts the verdicts of closed records already there', async () => {
    await withScratch(async (sequelize) => {
      await createMigrator(sequelize).up({ to: '0009-invitations-withdrawn' })
      const q = (sql: string, replacements: unknown[] = []) => sequelize.query(sql, { type: QueryTypes.INSERT, replacements })
      const now = new Date()
      await q('INSERT INTO users (id, email, name, role, password_hash, active, created_at, updated_at) VALUES (1, \'t@test.example\', \'T\', \'technician\', \'x\', 1, ?, ?)', [now, now])
      await q('INSERT INTO procedures (id, slug, created_by_id, created_at, updated_at) VALUES (1, \'p\', 1, ?, ?)', [now, now])
      // Multimeter diode test (REFERENCES): 0.40–0.90 V good; 0.012 V is a short.
      const content = {
        title: 'Test', deviceType: 'dimmer', symptoms: ['dead'], causes: [{ key: 'short', name: 'Shorted', prior: 0.5 }, { key: 'other', name: 'Other', prior: 0.5 }],
        steps: [{ key: 'd1', title: 'Diode test', instruction: 'Red on A.', measurement: { quantity: 'diode_drop', unit: 'V', min: 0.4, max: 0.9 }, failPointsTo: ['short'] }],
      }
      await q('INSERT INTO revisions (id, procedure_id, number, state, author_id, content, change_note, version, created_at, updated_at) VALUES (1, 1, 1, \'published\', 1, ?, \'\', 1, ?, ?)', [JSON.stringify(content), now, now])
      const steps = { d1: { value: '0.012 V', note: '', done: true } }
      for (const [id, status] of [[1, 'closed'], [2, 'in_progress']] as const) {
        await q(`INSERT INTO repair_records (id, status, procedure_id, revision_id, device_type, symptoms, technician_id, steps, notes, cause_procedure_id, cause_key, outcome, parts, photo_ids, started_at, closed_at, created_at, updated_at)
          VALUES (?, ?, 1, 1, 'dimmer', '[]', 1, ?, '', 1, 'short', 'repaired', '[]', '[]', ?, ?, ?, ?)`, [id, status, JSON.stringify(steps), now, now, now, now])
      }
      await migrateUp(sequelize)
      const select = <T>(sql: string) => sequelize.query<T>(sql, { type: QueryTypes.SELECT })
      const json = (value: unknown) => (typeof value === 'string' ? JSON.parse(value) : value)
      const [rev] = await select<{ content: unknown }>('SELECT content FROM revisions WHERE id = 1')
      const step = json(rev!.content).steps[0]
      expect(step.failPointsTo).toBeUndefined()
      expect(step.verdicts).toEqual({ low: { causes: ['short'] }, high: { causes: ['short'] }, open: { causes: ['short'] } })
      const [record] = await select<{ steps: unknown, path: unknown }>('SELECT steps, path FROM repair_records WHERE id = 1')
      expect(json(record!.steps).d1).toMatchObject({ value: '0.012 V', verdict: 'low', readAt: null })
      expect(json(record!.path)).toEqual([])
      // Only the closed record is counted.
      expect(await select('SELECT procedure_id, step_key, verdict, cause_key, n FROM learned_verdicts')).toEqual([{ procedure_id: 1, step_key: 'd1', verdict: 'low', cause_key: 'short', n: 1 }])
      expect(await select('SELECT procedure_id, cause_key, n FROM learned_causes')).toEqual([{ procedure_id: 1, cause_key: 'short', n: 1 }])
    })
  })
})
