// Applies pending migrations to the database named by the NUXT_DB_* variables.
import { closeDatabase, dbConfigFromEnv, initDatabase } from '../server/db'
import { migrateUp } from '../server/db/migrate'

const sequelize = initDatabase(dbConfigFromEnv())
try {
  const applied = await migrateUp(sequelize)
  console.log(applied.length ? `✓ migrations applied: ${applied.join(', ')}` : '✓ database schema is up to date')
}
finally {
  await closeDatabase()
}
