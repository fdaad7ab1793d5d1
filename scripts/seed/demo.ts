import type { ObjectStore } from '../../server/services/storage'
import type { DemoPerson } from './demo-content'
import { seedProcedures, seedVocabulary } from './procedures'
import { seedCaptures } from './captures'
import { seedRecords } from './records'
import { seedDemoUsers } from './users'

/**
 * Seeds the demo workshop ("Harbour Lane Repair Co-op", invented). Idempotent: what exists is
 * left as it is, so a second `npm start` keeps every change made through the app.
 */
export async function seedDemo(store: ObjectStore): Promise<Record<string, number>> {
  const users = await seedDemoUsers()
  await seedVocabulary()
  const procedures = await seedProcedures(users as Record<DemoPerson, (typeof users)[string]>, store)
  const records = await seedRecords(users as Record<DemoPerson, (typeof users)[string]>)
  const captures = await seedCaptures(users.tomasz!, store)
  return { 'users': Object.keys(users).length, 'new procedures': procedures, 'new repair records': records, 'new reference captures': captures }
}
