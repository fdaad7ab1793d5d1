import { initDatabase } from '../db'

// The one database connection of this server process, opened at start. Migrations are not run
// here: `npm start` / `npm run db:migrate` apply them before the server starts.
export default defineNitroPlugin(() => {
  const { db } = useRuntimeConfig()
  initDatabase({ host: db.host, port: Number(db.port), name: db.name, user: db.user, password: db.password, hosts: String(db.hosts ?? ''), syncWait: Number(db.syncWait) || 0 })
})
