import { randomBytes } from 'node:crypto'
import { QueryTypes, Transaction, UniqueConstraintError } from 'sequelize'
import { describe, expect, it } from 'vitest'
import type { RevisionContent } from '../../shared/types/procedure'
import { inTransaction, isDeadlock, Procedure, RecordSymptom, RepairRecord, Revision, User } from '../../server/db'
import { startRecord } from '../../server/services/records/lifecycle'
import { DEMO, signedIn } from '../helpers/api'
import { makeContent } from '../helpers/content'
import { makeUser, testDb } from '../helpers/db'
import { waitUntil } from '../helpers/stack'

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

// Row locks serialise these rules on one server only; on a Galera cluster they must rest on what
// certification orders (tests/cluster/ shows them there): a unique key, or a write to a shared row.
describe('rules that hold beyond row locks', () => {
  it('keeps one open draft per author and procedure in a unique index, whatever writes the rows', async () => {
    const db = testDb()
    const [author, other] = await Promise.all([makeUser({ role: 'author' }), makeUser({ role: 'author' })])
    const proc = await Procedure.create({ slug: `one-draft-${randomBytes(4).toString('hex')}`, createdById: author.id, publishedRevisionId: null, retiredAt: null })
    const draft = (authorId: number) => Revision.create({ procedureId: proc.id, number: null, authorId, content: makeContent() as RevisionContent, baseRevisionId: null, reviewerId: null, submittedAt: null, decidedAt: null, publishedAt: null })
    const first = await draft(author.id)
    const second = await draft(author.id).catch((e: unknown) => e)
    expect(second).toBeInstanceOf(UniqueConstraintError)
    expect(String((second as UniqueConstraintError).original?.message)).toMatch(/revisions_one_open_draft/)
    await expect(draft(other.id), 'another author drafts the same procedure').resolves.toBeInstanceOf(Revision)
    await first.update({ state: 'in_review', number: 1, submittedAt: new Date() })
    await expect(draft(author.id), 'a new draft once the first is submitted').resolves.toBeInstanceOf(Revision)
    const open = await db.query<{ n: number }>('SELECT COUNT(*) AS n FROM revisions WHERE procedure_id = ? AND author_id = ? AND state = \'draft\'', { replacements: [proc.id, author.id], type: QueryTypes.SELECT })
    expect(open[0]!.n).toBe(1)
  })

  it('writes the admins\' guard row when a change takes an admin away, and only then', async () => {
    const db = testDb()
    const version = async () => Number((await db.query<{ version: number }>('SELECT version FROM rule_guards WHERE name = \'active-admins\'', { type: QueryTypes.SELECT }))[0]?.version ?? 0)
    const admin = await signedIn(DEMO.admin)
    const colleague = await makeUser({ role: 'admin' })
    const before = await version()
    expect((await admin.patch(`/api/users/${colleague.id}`, { name: 'Renamed admin' })).status).toBe(200)
    expect(await version(), 'a rename keeps every admin').toBe(before)
    expect((await admin.patch(`/api/users/${colleague.id}`, { role: 'editor' })).status).toBe(200)
    expect(await version(), 'a demotion writes the guard').toBe(before + 1)
    expect((await admin.patch(`/api/users/${colleague.id}`, { role: 'admin' })).status).toBe(200)
    expect((await admin.patch(`/api/users/${colleague.id}`, { active: false })).status).toBe(200)
    expect(await version(), 'a deactivation writes the guard').toBe(before + 2)
  })
})

describe('a new record\'s symptoms', () => {
  // InnoDB's locking reads lock the gaps they scan (MariaDB Knowledge Base, "InnoDB Lock Modes":
  // gap and next-key locks under REPEATABLE READ, from memory): a DELETE of rows that do not exist
  // yet locks the gap at the end of the table, where every new record's rows go.
  it('are written without locking the gap where other records\' symptoms go', async () => {
    const db = testDb()
    const tech = await makeUser({ role: 'technician' })
    // Holds the end of the audit log, so the record's transaction waits at its audit entry, just
    // after writing its symptoms, and stays open meanwhile.
    const hold = await db.transaction()
    await db.query('SELECT id FROM audit_events WHERE id > (SELECT COALESCE(MAX(id), 0) FROM audit_events) FOR UPDATE', { transaction: hold, type: QueryTypes.SELECT })
    const jobRef = `GAP-${randomBytes(4).toString('hex')}`
    const started = startRecord({ deviceType: 'rotary-led-dimmer-trailing-edge', symptoms: ['does-not-dim'], unit: { model: 'VR-240 rev C', serial: 'GAP-1', jobRef } }, tech)
      .then(r => ({ id: r.id }), (e: unknown) => ({ error: e }))
    const probe = await db.transaction({ isolationLevel: Transaction.ISOLATION_LEVELS.READ_UNCOMMITTED })
    try {
      const written = async () => (await db.query<{ id: number }>(
        'SELECT r.id FROM repair_records r JOIN record_symptoms s ON s.record_id = r.id WHERE r.job_ref = ?',
        { replacements: [jobRef], transaction: probe, type: QueryTypes.SELECT },
      )).length > 0
      await waitUntil('the record\'s symptoms written, its transaction open', written, 20_000, 50)
      // Another record started meanwhile: its symptom rows go after the open record's. A lock on
      // that gap would hold this insert until the open record commits; one second ends the wait
      // with an error instead.
      await db.query('SET innodb_lock_wait_timeout = 1', { transaction: probe })
      const other = await RepairRecord.create({
        procedureId: null, revisionId: null, deviceType: 'rotary-led-dimmer-trailing-edge', symptoms: ['does-not-dim'],
        unitModel: 'VR-240 rev C', unitSerial: 'GAP-2', jobRef, technicianId: tech.id, causeProcedureId: null, causeKey: null,
        outcome: null, minutes: null, replacementCostCents: null, closedAt: null,
      }, { transaction: probe })
      const inserted = await RecordSymptom.create({ recordId: other.id, symptom: 'does-not-dim' }, { transaction: probe }).then(() => 'inserted', (e: unknown) => String(e))
      expect(inserted).toBe('inserted')
    }
    finally {
      await db.query('SET innodb_lock_wait_timeout = DEFAULT', { transaction: probe }).catch(() => { /* the transaction may have ended */ })
      await probe.rollback()
      await hold.rollback()
    }
    const result = await started
    expect(result, 'the record itself commits once the audit log is free').toHaveProperty('id')
  })
})
