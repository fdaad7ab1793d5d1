// Seeds the demo workshop into the database and bucket named by the NUXT_DB_* / NUXT_S3_*
// variables (idempotent).
import { closeDatabase, dbConfigFromEnv, initDatabase } from '../server/db'
import { seedDemo } from './seed/demo'
import { ObjectStore, s3ConfigFromEnv } from '../server/services/storage'

initDatabase(dbConfigFromEnv())
try {
  const counts = await seedDemo(new ObjectStore(s3ConfigFromEnv()))
  console.log(`✓ demo workshop seeded: ${Object.entries(counts).map(([k, v]) => `${v} ${k}`).join(', ')}`)
}
finally {
  await closeDatabase()
}
