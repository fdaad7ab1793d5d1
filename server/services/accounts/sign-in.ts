import { randomBytes } from 'node:crypto'
import { User } from '../../db'
import { unauthenticated } from '../errors'
import { assertNotThrottled, forgetFailedSignIns, noteFailedSignIn } from './throttling'

export interface PasswordCheck {
  verify: (hash: string, plain: string) => Promise<boolean>
}

// Checked when the e-mail is unknown, so that answer takes as long as a wrong password. A
// random hash made once per process: not a cache of anything, so nothing ever empties it.
let decoyHash: string | undefined

/**
 * Checks e-mail and password. Unknown e-mail, wrong password and a deactivated account all give
 * the same 401, so the answer does not tell which accounts exist.
 */
export async function authenticate(email: string, password: string, ip: string, hasher: PasswordCheck & { hash: (p: string) => Promise<string> }): Promise<User> {
  await assertNotThrottled(email, ip)
  const user = await User.findOne({ where: { email } })
  let ok = false
  if (user?.passwordHash && user.active) {
    ok = await hasher.verify(user.passwordHash, password)
  }
  else {
    decoyHash ??= await hasher.hash(randomBytes(16).toString('hex'))
    await hasher.verify(decoyHash, password)
  }
  if (!ok || !user) {
    await noteFailedSignIn(email, ip)
    throw unauthenticated('E-mail or password is not right.')
  }
  await forgetFailedSignIns(email)
  await user.update({ lastLoginAt: new Date() })
  return user
}
