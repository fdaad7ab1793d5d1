// Seeds the demo workshop into the database named by the NUXT_DB_* variables (idempotent).
import { closeDatabase, dbConfigFromEnv, initDatabase } from '../server/db'
import { seedDemo } from '../server/db/seed'

initDatabase(dbConfigFromEnv())
try {
  const counts = await seedDemo()
  console.log(`✓ demo workshop seeded: ${Object.entries(counts).map(([k, v]) => `${v} ${k}`).join(', ')}`)
}
finally {
  await closeDatabase()
}
