import { Op } from 'sequelize'
import { LoginFailure } from '../../db'
import { throttled } from '../errors'

/** Failed sign-ins allowed per window before 429, per account and per client address. */
export const THROTTLE = { windowMs: 15 * 60_000, perAccount: 10, perIp: 30 }

export async function assertNotThrottled(email: string, ip: string): Promise<void> {
  const since = new Date(Date.now() - THROTTLE.windowMs)
  const [byAccount, byIp] = await Promise.all([
    LoginFailure.count({ where: { email, createdAt: { [Op.gte]: since } } }),
    LoginFailure.count({ where: { ip, createdAt: { [Op.gte]: since } } }),
  ])
  if (byAccount >= THROTTLE.perAccount || byIp >= THROTTLE.perIp) {
    throw throttled(
      'Too many failed sign-ins. Wait 15 minutes and try again, or ask an admin to check the account.',
      { retryAfterSeconds: THROTTLE.windowMs / 1000 },
    )
  }
}

export async function noteFailedSignIn(email: string, ip: string): Promise<void> {
  await LoginFailure.create({ email, ip })
}

/** A successful sign-in clears the account's failed attempts. */
export async function forgetFailedSignIns(email: string): Promise<void> {
  await LoginFailure.destroy({ where: { email } })
}
