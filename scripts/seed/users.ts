import { Hash } from '@adonisjs/hash'
import { Scrypt } from '@adonisjs/hash/drivers/scrypt'
import type { Role } from '../../shared/types/roles'
import { User } from '../../server/db/models'

/** Demo-only password of every demo account (README.md says so). */
export const DEMO_PASSWORD = 'bench-demo-2026'

export const DEMO_ACCOUNTS: Array<{ key: string, email: string, name: string, role: Role }> = [
  { key: 'sam', email: 'admin@harbourlane.example', name: 'Sam Carter', role: 'admin' },
  { key: 'priya', email: 'editor@harbourlane.example', name: 'Priya Raman', role: 'editor' },
  { key: 'tomasz', email: 'author@harbourlane.example', name: 'Tomasz Wójcik', role: 'author' },
  { key: 'ade', email: 'tech@harbourlane.example', name: 'Ade Okafor', role: 'technician' },
  { key: 'mika', email: 'mika@harbourlane.example', name: 'Mika Lindqvist', role: 'technician' },
]

// The same scrypt driver and default settings nuxt-auth-utils' hashPassword uses, so the app's
// verifyPassword accepts these hashes.
const hasher = new Hash(new Scrypt({}))

/** Creates the demo accounts that are missing; existing ones (and their passwords) are left alone. */
export async function seedDemoUsers(): Promise<Record<string, User>> {
  const byKey: Record<string, User> = {}
  for (const account of DEMO_ACCOUNTS) {
    let user = await User.findOne({ where: { email: account.email } })
    if (!user) {
      user = await User.create({ email: account.email, name: account.name, role: account.role, passwordHash: await hasher.make(DEMO_PASSWORD), lastLoginAt: null })
    }
    byKey[account.key] = user
  }
  return byKey
}
