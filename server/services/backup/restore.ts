import { createHash } from 'node:crypto'
import { readFileSync } from 'node:fs'
import { readFile } from 'node:fs/promises'
import { join } from 'node:path'
import { CreateBucketCommand, HeadBucketCommand, PutObjectCommand } from '@aws-sdk/client-s3'
import { QueryTypes } from 'sequelize'
import { createSequelize, dbConfigFromEnv } from '../../db'
import { ObjectStore, s3ConfigFromEnv } from '../storage'
import { clientArgs, runClient, tableCounts, type BackupManifest } from './folder'

/**
 * Restores a backup into the database and bucket named by the environment: every table of the
 * database is replaced by the dump's, every object put back (objects not in the backup are
 * left alone). Refuses a database that has tables unless `replace` is set. Checks afterwards
 * that every table has the backup's row count and every object its size and SHA-256.
 */
export async function restoreBackup(dir: string, opts: { replace: boolean }, env: NodeJS.ProcessEnv = process.env, log: (line: string) => void = () => undefined): Promise<{ tables: number, rows: number, objects: number }> {
  const manifest = JSON.parse(readFileSync(join(dir, 'manifest.json'), 'utf8')) as BackupManifest
  if (manifest.format !== 1) throw new Error(`unknown backup format ${String(manifest.format)}`)
  const db = dbConfigFromEnv(env)
  const sequelize = createSequelize(db)
  try {
    const existing = Object.keys(await tableCounts(sequelize, db.name))
    if (existing.length && !opts.replace) throw new Error(`database "${db.name}" has ${existing.length} tables; pass --replace to overwrite it with the backup`)
    log(`loading the dump into "${db.name}"…`)
    // Tables the dump does not have would survive its DROP TABLE IF EXISTS; drop them all first.
    if (existing.length) {
      // One connection (a transaction pins it), since FOREIGN_KEY_CHECKS is per session.
      await sequelize.transaction(async (transaction) => {
        await sequelize.query('SET FOREIGN_KEY_CHECKS = 0', { type: QueryTypes.RAW, transaction })
        for (const t of existing) await sequelize.query(`DROP TABLE \`${t.replace(/`/g, '``')}\``, { type: QueryTypes.RAW, transaction })
        await sequelize.query('SET FOREIGN_KEY_CHECKS = 1', { type: QueryTypes.RAW, transaction })
      })
    }
    await runClient('mariadb', [...clientArgs(db), db.name], { password: db.password, stdinFile: join(dir, 'database.sql') })
    const restored = await tableCounts(sequelize, db.name)
    for (const [table, n] of Object.entries(manifest.database.tables)) {
      if (restored[table] !== n) throw new Error(`table ${table}: ${restored[table] ?? 'missing'} rows after the restore, ${n} in the backup`)
    }

    const store = new ObjectStore(s3ConfigFromEnv(env))
    const bucket = store.cfg.bucket
    const exists = await store.client.send(new HeadBucketCommand({ Bucket: bucket })).then(() => true, () => false)
    if (!exists) await store.client.send(new CreateBucketCommand({ Bucket: bucket }))
    for (const o of manifest.objects) {
      const data = await readFile(join(dir, 'objects', o.key))
      const sha = createHash('sha256').update(data).digest('hex')
      if (sha !== o.sha256 || data.length !== o.bytes) throw new Error(`object ${o.key} in the backup folder does not match its manifest entry`)
      await store.client.send(new PutObjectCommand({ Bucket: bucket, Key: o.key, Body: data, ContentLength: data.length, ContentType: o.contentType ?? undefined }))
    }
    log(`restored ${Object.keys(manifest.database.tables).length} tables and ${manifest.objects.length} objects`)
    return { tables: Object.keys(manifest.database.tables).length, rows: Object.values(manifest.database.tables).reduce((a, b) => a + b, 0), objects: manifest.objects.length }
  }
  finally {
    await sequelize.close()
  }
}
