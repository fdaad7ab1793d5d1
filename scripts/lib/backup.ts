import { spawn } from 'node:child_process'
import { createHash } from 'node:crypto'
import { createReadStream, createWriteStream, existsSync, mkdirSync, readFileSync, writeFileSync } from 'node:fs'
import { readFile } from 'node:fs/promises'
import { dirname, join } from 'node:path'
import { pipeline } from 'node:stream/promises'
import { CreateBucketCommand, GetObjectCommand, HeadBucketCommand, ListObjectsV2Command, PutObjectCommand } from '@aws-sdk/client-s3'
import { QueryTypes, type Sequelize } from 'sequelize'
import { createSequelize, dbConfigFromEnv, type DbConfig } from '../../server/db'
import { ObjectStore, s3ConfigFromEnv } from '../../server/services/storage'

/**
 * A backup is a folder: `database.sql` (mariadb-dump, one consistent snapshot), `objects/` (every
 * object of the bucket, by key) and `manifest.json` (row counts per table, each object's size
 * and SHA-256). The database is dumped first: objects are written before the rows that name
 * them and never changed afterwards, so every object a dumped row names is in the bucket.
 */
export interface BackupManifest {
  format: 1
  createdAt: string
  database: { name: string, tables: Record<string, number> }
  objects: Array<{ key: string, bytes: number, sha256: string, contentType: string | null }>
}

function run(cmd: string, args: string[], opts: { password: string, stdinFile?: string, stdoutFile?: string }): Promise<void> {
  return new Promise((resolve, reject) => {
    // The password goes through the environment, never the command line (ps would show it).
    const child = spawn(cmd, args, { env: { ...process.env, MYSQL_PWD: opts.password }, stdio: [opts.stdinFile ? 'pipe' : 'ignore', opts.stdoutFile ? 'pipe' : 'ignore', 'pipe'] })
    let stderr = ''
    child.stderr!.on('data', (d: Buffer) => (stderr += d.toString()))
    const out = opts.stdoutFile ? pipeline(child.stdout!, createWriteStream(opts.stdoutFile)) : Promise.resolve()
    if (opts.stdinFile) void pipeline(createReadStream(opts.stdinFile), child.stdin!).catch(reject)
    child.on('error', reject)
    child.on('close', async (code) => {
      await out.catch(reject)
      if (code === 0) resolve()
      else reject(new Error(`${cmd} exited with ${code}: ${stderr.trim().split('\n').slice(-3).join(' ')}`))
    })
  })
}

const clientArgs = (db: DbConfig) => ['--no-defaults', `--host=${db.host}`, `--port=${db.port}`, `--user=${db.user}`, '--default-character-set=utf8mb4']

async function tableCounts(sequelize: Sequelize, name: string): Promise<Record<string, number>> {
  const tables = await sequelize.query<{ t: string }>(
    'SELECT TABLE_NAME AS t FROM information_schema.TABLES WHERE TABLE_SCHEMA = ? AND TABLE_TYPE = \'BASE TABLE\' ORDER BY TABLE_NAME',
    { type: QueryTypes.SELECT, replacements: [name] },
  )
  const counts: Record<string, number> = {}
  for (const { t } of tables) {
    const [row] = await sequelize.query<{ n: number | string }>(`SELECT COUNT(*) AS n FROM \`${t.replace(/`/g, '``')}\``, { type: QueryTypes.SELECT })
    counts[t] = Number(row!.n)
  }
  return counts
}

/** Writes a backup of the database and bucket named by the NUXT_DB_* and NUXT_S3_* variables into `dir`. */
export async function createBackup(dir: string, env: NodeJS.ProcessEnv = process.env, log: (line: string) => void = () => undefined): Promise<BackupManifest> {
  if (existsSync(join(dir, 'manifest.json'))) throw new Error(`${dir} already holds a backup; choose an empty folder`)
  mkdirSync(join(dir, 'objects'), { recursive: true })
  const db = dbConfigFromEnv(env)
  log(`dumping database "${db.name}"…`)
  await run('mariadb-dump', [...clientArgs(db), '--single-transaction', '--no-tablespaces', '--routines', '--triggers', '--hex-blob', db.name], { password: db.password, stdoutFile: join(dir, 'database.sql') })
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
    await run('mariadb', [...clientArgs(db), db.name], { password: db.password, stdinFile: join(dir, 'database.sql') })
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
