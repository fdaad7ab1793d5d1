import { describe, expect, it } from 'vitest'
import { inTransaction, isDeadlock, User } from '../../server/db'
import { makeUser, testDb } from '../helpers/db'

/**
 * Two transactions that lock the same two rows in opposite order: the classic deadlock. InnoDB
 * detects it at once and rolls one back with error 1213 (ER_LOCK_DEADLOCK); the MySQL Reference
 * Manual, "How to Minimize and Handle Deadlocks", says to "always be prepared to re-issue a
 * transaction if it fails due to deadlock" (quoted from memory; common practice on InnoDB).
 */
async function crossLock(attempts: number) {
  testDb()
  const [a, b] = await Promise.all([makeUser(), makeUser()])
  let calls = 0
  let locked = 0
  let release!: () => void
  const bothLocked = new Promise<void>(r => (release = r))
  const run = (first: number, second: number) => inTransaction(async (transaction) => {
    calls++
    await User.findByPk(first, { transaction, lock: transaction.LOCK.UPDATE })
    if (++locked === 2) release()
    await bothLocked
    await User.findByPk(second, { transaction, lock: transaction.LOCK.UPDATE })
    await User.update({ name: `crossed ${first}` }, { where: { id: second }, transaction })
    return second
  }, { attempts })
  const results = await Promise.allSettled([run(a!.id, b!.id), run(b!.id, a!.id)])
  return { results, calls, ids: [a!.id, b!.id] }
}

describe('transactions', () => {
  it('re-runs the transaction InnoDB chose as a deadlock victim, and both finish', async () => {
    const { results, calls, ids } = await crossLock(4)
    expect(results.map(r => r.status)).toEqual(['fulfilled', 'fulfilled'])
    expect(calls).toBe(3)
    const names = (await User.findAll({ where: { id: ids }, attributes: ['name'], raw: true })).map(u => u.name).sort()
    expect(names).toEqual([`crossed ${ids[0]}`, `crossed ${ids[1]}`].sort())
  })

  it('hands the deadlock to the caller once the attempts are used up', async () => {
    const { results, calls } = await crossLock(1)
    const rejected = results.filter(r => r.status === 'rejected')
    expect(rejected).toHaveLength(1)
    expect(isDeadlock((rejected[0] as PromiseRejectedResult).reason)).toBe(true)
    expect(calls).toBe(2)
  })

  it('does not re-run a transaction that failed for any other reason', async () => {
    testDb()
    let calls = 0
    await expect(inTransaction(async () => {
      calls++
      throw new Error('not a deadlock')
    })).rejects.toThrow('not a deadlock')
    expect(calls).toBe(1)
  })
})
