import { execFile } from 'node:child_process'
import { createHash } from 'node:crypto'
import { mkdtempSync, rmSync } from 'node:fs'
import { tmpdir } from 'node:os'
import { join } from 'node:path'
import { promisify } from 'node:util'
import { GetObjectCommand, ListObjectsV2Command } from '@aws-sdk/client-s3'
import { QueryTypes, type Sequelize } from 'sequelize'
import { afterAll, describe, expect, it } from 'vitest'
import { ensureDatabase } from '../../scripts/lib/mariadb'
import { DB_USER, dbHandle, testProfile } from '../../scripts/lib/stack'
import { createSequelize, dbConfigFromEnv, OutboxMessage } from '../../server/db'
import { ObjectStore, s3ConfigFromEnv } from '../../server/services/storage'
import { testDb } from '../helpers/db'
import { waitUntil } from '../helpers/stack'

const run = promisify(execFile)
const TSX = join(process.cwd(), 'node_modules', '.bin', 'tsx')

/** Every row of every table, as one hash per table (rows ordered by their full text). */
async function tableHashes(sequelize: Sequelize, database: string): Promise<Record<string, string>> {
  const tables = await sequelize.query<{ t: string }>('SELECT TABLE_NAME AS t FROM information_schema.TABLES WHERE TABLE_SCHEMA = ? ORDER BY TABLE_NAME', { type: QueryTypes.SELECT, replacements: [database] })
  const out: Record<string, string> = {}
  for (const { t } of tables) {
    const rows = await sequelize.query<Record<string, unknown>>(`SELECT * FROM \`${database}\`.\`${t}\``, { type: QueryTypes.SELECT })
    const lines = rows.map(r => JSON.stringify(r, (_, v) => (Buffer.isBuffer(v) ? v.toString('hex') : v))).sort()
    out[t] = `${rows.length}:${createHash('sha256').update(lines.join('\n')).digest('hex')}`
  }
  return out
}

async function objectHashes(store: ObjectStore): Promise<Record<string, string>> {
  const out: Record<string, string> = {}
  let token: string | undefined
  do {
    const page = await store.client.send(new ListObjectsV2Command({ Bucket: store.cfg.bucket, ContinuationToken: token }))
    for (const item of page.Contents ?? []) {
      const res = await store.client.send(new GetObjectCommand({ Bucket: store.cfg.bucket, Key: item.Key! }))
      out[item.Key!] = createHash('sha256').update(Buffer.from(await res.Body!.transformToByteArray())).digest('hex')
    }
    token = page.IsTruncated ? page.NextContinuationToken : undefined
  } while (token)
  return out
}

describe('backup and restore', () => {
  const dir = mkdtempSync(join(tmpdir(), 'benchlore-backup-'))
  const source = dbConfigFromEnv()
  const target = { NUXT_DB_NAME: `${source.name}_restored`, NUXT_S3_BUCKET: `${s3ConfigFromEnv().bucket}-restored` }
  afterAll(() => rmSync(dir, { recursive: true, force: true }))

  it('round-trips every row and every object into another database and bucket', async () => {
    // Mail still waiting would be sent (and its row changed) between the dump and the comparison.
    testDb()
    await waitUntil('outbox drained', async () => (await OutboxMessage.count({ where: { status: 'pending' } })) === 0, 30_000, 300)

    const backup = await run(TSX, ['scripts/backup.ts', 'create', join(dir, 'b1')], { env: process.env })
    expect(backup.stdout).toMatch(/backup written/)
    const sequelize = createSequelize(source)
    try {
      const before = await tableHashes(sequelize, source.name)
      const objectsBefore = await objectHashes(new ObjectStore(s3ConfigFromEnv()))
      expect(Object.keys(before).length).toBeGreaterThan(10)
      expect(Object.keys(objectsBefore).length).toBeGreaterThan(5)

      // A second database for the app user on the same server, and a bucket made by the restore.
      ensureDatabase(dbHandle(testProfile()), target.NUXT_DB_NAME, DB_USER, source.password)
      const env = { ...process.env, ...target }
      const restored = await run(TSX, ['scripts/backup.ts', 'restore', join(dir, 'b1')], { env })
      expect(restored.stdout).toMatch(/verified/)
      expect(await tableHashes(sequelize, target.NUXT_DB_NAME)).toEqual(before)
      expect(await objectHashes(new ObjectStore(s3ConfigFromEnv(env)))).toEqual(objectsBefore)

      // A restore over a database with tables needs --replace, and then replaces it.
      const again = await run(TSX, ['scripts/backup.ts', 'restore', join(dir, 'b1')], { env }).then(() => null, (e: { code: number, stderr: string, stdout: string }) => e)
      expect(again?.code).not.toBe(0)
      expect(`${again?.stdout}${again?.stderr}`).toMatch(/--replace/)
      await sequelize.query(`DELETE FROM \`${target.NUXT_DB_NAME}\`.audit_events`, { type: QueryTypes.DELETE })
      await run(TSX, ['scripts/backup.ts', 'restore', join(dir, 'b1'), '--replace'], { env })
      expect(await tableHashes(sequelize, target.NUXT_DB_NAME)).toEqual(before)
    }
    finally {
      await sequelize.query(`DROP DATABASE IF EXISTS \`${target.NUXT_DB_NAME}\``, { type: QueryTypes.RAW }).catch(() => undefined)
      await sequelize.close()
    }
  }, 180_000)

  it('refuses to write into a folder that holds a backup', async () => {
    await run(TSX, ['scripts/backup.ts', 'create', join(dir, 'b2')], { env: process.env })
    const second = await run(TSX, ['scripts/backup.ts', 'create', join(dir, 'b2')], { env: process.env }).then(() => null, (e: { code: number, stdout: string, stderr: string }) => e)
    expect(second?.code).not.toBe(0)
    expect(`${second?.stdout}${second?.stderr}`).toMatch(/already holds a backup/)
  }, 120_000)
})
