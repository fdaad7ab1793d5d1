// Backup and restore of Benchlore's data: the MariaDB database and the object-store bucket.
//
//   npm run backup -- [folder]                  writes a backup (default: backups/<date-time>)
//   npm run restore -- <folder> [--replace]     restores it (--replace: overwrite a database that has tables)
//
// The database and bucket are those of the NUXT_DB_* and NUXT_S3_* variables; when none are set,
// those of the local `npm start` stack under .data/ (which must be running: `npm run services`).
import { join } from 'node:path'
import { createBackup } from '../server/services/backup/create'
import { restoreBackup } from '../server/services/backup/restore'
import { done, fail, step } from './lib/proc'
import { stackEnv, startProfile } from './lib/stack'

const [action, ...rest] = process.argv.slice(2)
const env = process.env.NUXT_DB_HOST ? process.env : stackEnv(startProfile())
const log = step
const positional = rest.filter(a => !a.startsWith('--'))

try {
  if (action === 'create') {
    const dir = positional[0] ?? join('backups', new Date().toISOString().replace(/[:.]/g, '-'))
    const m = await createBackup(dir, env, log)
    done(`backup written to ${dir}: ${Object.keys(m.database.tables).length} tables, ${Object.values(m.database.tables).reduce((a, b) => a + b, 0)} rows, ${m.objects.length} objects`)
  }
  else if (action === 'restore') {
    if (!positional[0]) fail('usage: npm run restore -- <backup folder> [--replace]')
    const r = await restoreBackup(positional[0]!, { replace: rest.includes('--replace') }, env, log)
    done(`restored ${r.tables} tables (${r.rows} rows) and ${r.objects} objects; row counts and object checksums verified`)
  }
  else fail('usage: tsx scripts/backup.ts create [folder] | restore <folder> [--replace]')
}
catch (error) {
  fail((error as Error).message)
}
