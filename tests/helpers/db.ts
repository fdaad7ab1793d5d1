import { randomBytes } from 'node:crypto'
import { Hash } from '@adonisjs/hash'
import { Scrypt } from '@adonisjs/hash/drivers/scrypt'
import type { Role } from '../../shared/types/roles'
import { dbConfigFromEnv, initDatabase, LoginFailure, User } from '../../server/db'

/** Direct database access for arranging fixtures and checking what was stored. */
export function testDb() {
  return initDatabase(dbConfigFromEnv())
}

const hasher = new Hash(new Scrypt({}))
export const FACTORY_PASSWORD = 'factory-password-123'

/** A fresh user with a unique e-mail (defaults: technician, active, known password). */
export async function makeUser(overrides: Partial<{ role: Role, active: boolean, name: string, email: string }> = {}): Promise<User> {
  testDb()
  const tag = randomBytes(4).toString('hex')
  return await User.create({
    email: overrides.email ?? `user-${tag}@test.example`,
    name: overrides.name ?? `Test ${overrides.role ?? 'technician'} ${tag}`,
    role: overrides.role ?? 'technician',
    passwordHash: await hasher.make(FACTORY_PASSWORD),
    active: overrides.active ?? true,
    lastLoginAt: null,
  })
}

/** Forget failed sign-ins from this machine, so throttling tests leave no trace for the others. */
export async function clearLoginFailures(): Promise<void> {
  testDb()
  await LoginFailure.destroy({ where: {} })
}
