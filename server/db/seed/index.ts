import { seedDemoUsers } from './users'

/**
 * Seeds the demo workshop ("Harbour Lane Repair Co-op", invented). Idempotent: what exists is
 * left as it is, so a second `npm start` keeps every change made through the app.
 */
export async function seedDemo(): Promise<{ users: number }> {
  const users = await seedDemoUsers()
  return { users: Object.keys(users).length }
}
