import { User } from '../../db'

/** Ends every session of the user at their next request (sealed cookies cannot be revoked). */
export async function endAllSessions(userId: number): Promise<void> {
  await User.increment('sessionVersion', { where: { id: userId } })
}
