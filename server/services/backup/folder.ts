import { spawn } from 'node:child_process'
import { createReadStream, createWriteStream } from 'node:fs'
import { pipeline } from 'node:stream/promises'
import { QueryTypes, type Sequelize } from 'sequelize'
import type { DbConfig } from '../../db'

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

/** Runs a MariaDB client tool (mariadb-dump, mariadb), feeding or catching a file. */
export function runClient(cmd: string, args: string[], opts: { password: string, stdinFile?: string, stdoutFile?: string }): Promise<void> {
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

export const clientArgs = (db: DbConfig) => ['--no-defaults', `--host=${db.host}`, `--port=${db.port}`, `--user=${db.user}`, '--default-character-set=utf8mb4']

/** The row count of every base table of database `name`. */
export async function tableCounts(sequelize: Sequelize, name: string): Promise<Record<string, number>> {
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
