import { createHash } from 'node:crypto'
import { createWriteStream, existsSync, mkdirSync, writeFileSync } from 'node:fs'
import { dirname, join } from 'node:path'
import { pipeline } from 'node:stream/promises'
import { GetObjectCommand, ListObjectsV2Command } from '@aws-sdk/client-s3'
import { createSequelize, dbConfigFromEnv } from '../../db'
import { ObjectStore, s3ConfigFromEnv } from '../storage'
import { clientArgs, runClient, tableCounts, type BackupManifest } from './folder'

/** Writes a backup of the database and bucket named by the NUXT_DB_* and NUXT_S3_* variables into `dir`. */
export async function createBackup(dir: string, env: NodeJS.ProcessEnv = process.env, log: (line: string) => void = () => undefined): Promise<BackupManifest> {
  if (existsSync(join(dir, 'manifest.json'))) throw new Error(`${dir} already holds a backup; choose an empty folder`)
  mkdirSync(join(dir, 'objects'), { recursive: true })
  const db = dbConfigFromEnv(env)
  log(`dumping database "${db.name}"…`)
  await runClient('mariadb-dump', [...clientArgs(db), '--single-transaction', '--no-tablespaces', '--routines', '--triggers', '--hex-blob', db.name], { password: db.password, stdoutFile: join(dir, 'database.sql') })
  const sequelize = createSequelize(db)
  let tables: Record<string, number>
  try {
    // Counted from the dump itself would be exact but slow; the counts are a check, and a
    // restore compares them with the restored tables (rows added since the dump are not in it).
    tables = await tableCounts(sequelize, db.name)
  }
  finally {
    await sequelize.close()
  }

  const store = new ObjectStore(s3ConfigFromEnv(env))
  const objects: BackupManifest['objects'] = []
  let token: string | undefined
  do {
    const page = await store.client.send(new ListObjectsV2Command({ Bucket: store.cfg.bucket, ContinuationToken: token }))
    for (const item of page.Contents ?? []) {
      const key = item.Key!
      const res = await store.client.send(new GetObjectCommand({ Bucket: store.cfg.bucket, Key: key }))
      const file = join(dir, 'objects', key)
      mkdirSync(dirname(file), { recursive: true })
      const hash = createHash('sha256')
      const body = res.Body as NodeJS.ReadableStream
      body.on('data', (c: Buffer) => hash.update(c))
      await pipeline(body, createWriteStream(file))
      objects.push({ key, bytes: item.Size ?? 0, sha256: hash.digest('hex'), contentType: res.ContentType ?? null })
    }
    token = page.IsTruncated ? page.NextContinuationToken : undefined
  } while (token)
  log(`copied ${objects.length} objects from bucket "${store.cfg.bucket}"`)

  const manifest: BackupManifest = { format: 1, createdAt: new Date().toISOString(), database: { name: db.name, tables }, objects }
  writeFileSync(join(dir, 'manifest.json'), `${JSON.stringify(manifest, null, 2)}\n`)
  return manifest
}
