import { randomBytes } from 'node:crypto'
import { describe, expect, it } from 'vitest'
import { QueryTypes, Transaction } from 'sequelize'
import { isDeadlock } from '../../server/db'
import { LEASE_TABLE, withLease } from '../../server/db/lease'
import { migrateUp } from '../../server/db/migrate'
import { MIGRATIONS } from '../../server/db/migrations'
import { nodeQuery } from '../../scripts/lib/galera'
import { DB_USER } from '../../scripts/lib/stack'
import { DEMO } from '../helpers/api'
import { APP, NODES, client, clusterConflicts, onNode, pinned } from '../helpers/cluster'
import { makeContent } from '../helpers/content'
import { FACTORY_PASSWORD, makeUser } from '../helpers/db'
import { capturedMail, waitUntil } from '../helpers/stack'

// Everything here runs on the test cluster (three Galera nodes, two app instances, each
// instance preferring a different node): what a single server serialises with row locks,
// named locks and SKIP LOCKED must still hold when the writers sit on different nodes.
const run = randomBytes(3).toString('hex')

describe('revision numbers on a cluster', () => {
  it('stay unique and gapless when authors on both instances (two nodes) submit at once', async () => {
    const editor = await client(APP[1]!).login(DEMO.editor)
    const first = await client(APP[0]!).login(DEMO.author)
    const created = await first.post('/api/procedures', { content: makeContent({ title: `Cluster numbering ${run}` }) })
    expect(created.status, JSON.stringify(created.body)).toBe(201)
    const { procedure, revision } = created.body as { procedure: { id: number, slug: string }, revision: { id: number } }
    expect((await first.post(`/api/revisions/${revision.id}/submit`)).status).toBe(200)
    expect((await editor.post(`/api/revisions/${revision.id}/approve`)).body.revision).toMatchObject({ number: 1, state: 'published' })

    // One open draft per author: ten authors, each with a draft, half signed in on each instance.
    const authors = await Promise.all(Array.from({ length: 10 }, () => makeUser({ role: 'author' })))
    const drafts = await Promise.all(authors.map(async (a, i) => {
      const c = await client(APP[i % 2]!).login(a.email, FACTORY_PASSWORD)
      const d = await c.post(`/api/procedures/${procedure.slug}/revisions`, {})
      expect(d.status, JSON.stringify(d.body)).toBe(201)
      return { c, id: (d.body as { revision: { id: number } }).revision.id }
    }))

    const conflictsBefore = clusterConflicts()
    const submitted = await Promise.all(drafts.map(d => d.c.post(`/api/revisions/${d.id}/submit`)))
    const conflicts = clusterConflicts() - conflictsBefore
    console.log(`concurrent submits: ${submitted.map(s => s.status).join(' ')}; certification conflicts and replication aborts meanwhile: ${conflicts}`)
    expect(submitted.map(s => s.status)).toEqual(submitted.map(() => 200))
    const numbers = submitted.map(s => (s.body as { revision: { number: number } }).revision.number).sort((a, b) => a - b)
    expect(numbers).toEqual(Array.from({ length: drafts.length }, (_, i) => i + 2))

    // The same on every node, read straight from each.
    for (const node of NODES) {
      const rows = onNode(node, `SELECT number FROM revisions WHERE procedure_id = ${procedure.id} AND number IS NOT NULL ORDER BY number`)
      expect(rows.map(r => Number(r[0])), `node ${node.name}`).toEqual([1, ...numbers])
      expect(onNode(node, `SELECT last_number FROM procedures WHERE id = ${procedure.id}`)[0]?.[0], `node ${node.name}`).toBe(String(drafts.length + 1))
    }
  })
})

describe('migrations on a cluster', () => {
  const scratch = `benchlore_race_${run}`
  const asRoot = (sql: string) => nodeQuery(NODES[0]!, sql)

  it('run once each when two processes start them together on different nodes', async () => {
    asRoot(`CREATE DATABASE \`${scratch}\` CHARACTER SET utf8mb4; GRANT ALL ON \`${scratch}\`.* TO '${DB_USER}'@'127.0.0.1';`)
    const [a, b] = [pinned(NODES[0]!, scratch), pinned(NODES[1]!, scratch)]
    try {
      const [ranA, ranB] = await Promise.all([migrateUp(a), migrateUp(b)])
      console.log(`migrations applied by the process on ${NODES[0]!.name}: ${ranA.length}, on ${NODES[1]!.name}: ${ranB.length}`)
      expect([...ranA, ...ranB].sort()).toEqual(MIGRATIONS.map(m => m.name).sort())
      for (const node of NODES) {
        const names = nodeQuery(node, `SELECT name FROM \`${scratch}\`.schema_migrations ORDER BY name`).trim().split('\n')
        expect(names, `node ${node.name}`).toEqual(MIGRATIONS.map(m => m.name).sort())
        expect(nodeQuery(node, `SELECT COUNT(*) FROM \`${scratch}\`.${LEASE_TABLE}`).trim(), `no lease left on ${node.name}`).toBe('0')
      }
    }
    finally {
      await Promise.all([a.close(), b.close()])
      asRoot(`DROP DATABASE IF EXISTS \`${scratch}\``)
    }
  })

  it('wait for a lease held through another node, and take over one its crashed holder left', async () => {
    const [a, c] = [pinned(NODES[0]!), pinned(NODES[2]!)]
    const name = `cluster-test-${run}`
    try {
      let entered = false
      const held = withLease(c, name, async () => {
        // While the lease is held through node 3, a taker on node 1 gives up.
        await expect(withLease(a, name, async () => {
          entered = true
        }, { waitMs: 1500 })).rejects.toThrow(/could not take/)
      })
      await held
      expect(entered).toBe(false)
      // A holder that died: its row outlived it and has expired.
      nodeQuery(NODES[1]!, `INSERT INTO benchlore.${LEASE_TABLE} (name, holder, expires_at) VALUES ('${name}', 'crashed-holder', UTC_TIMESTAMP(3) - INTERVAL 1 SECOND)`)
      expect(await withLease(a, name, async () => 'taken', { waitMs: 10_000 })).toBe('taken')
    }
    finally {
      await Promise.all([a.close(), c.close()])
    }
  })
})

describe('outbox on a cluster', () => {
  it('sends each message exactly once with a worker on each instance, writing through different nodes', async () => {
    const count = 120
    const subject = (i: number) => `Cluster outbox ${run} #${i}`
    // Queued through all three nodes, as app instances on each would.
    for (let i = 0; i < count; i++) {
      const node = NODES[i % NODES.length]!
      onNode(node, `INSERT INTO outbox_messages (kind, to_address, subject, text_body, status, attempts, next_attempt_at, created_at, updated_at) VALUES ('cluster_test', 'depot-${i % 7}@harbourlane.example', '${subject(i)}', 'Outbox delivery check.', 'pending', 0, UTC_TIMESTAMP(), UTC_TIMESTAMP(), UTC_TIMESTAMP())`)
    }
    const conflictsBefore = clusterConflicts()
    const sentOn = (node: (typeof NODES)[number]) => Number(onNode(node, `SELECT COUNT(*) FROM outbox_messages WHERE kind = 'cluster_test' AND subject LIKE 'Cluster outbox ${run} #%' AND status = 'sent'`)[0]?.[0])
    await waitUntil('every queued message marked sent', () => sentOn(NODES[2]!) === count, 90_000, 250)
    const mine = capturedMail().filter(m => m.subject.startsWith(`Cluster outbox ${run} #`))
    const perSubject = new Map<string, number>()
    for (const m of mine) perSubject.set(m.subject, (perSubject.get(m.subject) ?? 0) + 1)
    const twice = [...perSubject].filter(([, n]) => n > 1)
    console.log(`outbox: ${mine.length} messages received for ${count} queued; certification conflicts and replication aborts meanwhile: ${clusterConflicts() - conflictsBefore}`)
    expect(twice, 'messages sent more than once').toEqual([])
    expect(perSubject.size).toBe(count)
    for (const node of NODES) expect(sentOn(node), `node ${node.name}`).toBe(count)
  })
})

describe('outbox claims on a cluster', () => {
  it('let only one of two simultaneous claims of the same rows through two nodes commit; the other fails as a deadlock', async () => {
    const kind = `claim_race_${run}`
    for (let i = 0; i < 3; i++) onNode(NODES[0]!, `INSERT INTO outbox_messages (kind, to_address, subject, text_body, status, attempts, next_attempt_at, created_at, updated_at) VALUES ('${kind}', 'bench@harbourlane.example', 'Claim race ${i}', '-', 'pending', 0, UTC_TIMESTAMP() + INTERVAL 1 HOUR, UTC_TIMESTAMP(), UTC_TIMESTAMP())`)
    const [a, b] = [pinned(NODES[0]!), pinned(NODES[1]!)]
    const claim = async (db: typeof a, transaction: Transaction) => {
      // The shape of the outbox worker's claim (server/services/mail.ts): lock free rows, skipping locked ones, then lease them.
      const rows = await db.query<{ id: number }>(`SELECT id FROM outbox_messages WHERE kind = '${kind}' AND status = 'pending' AND (locked_until IS NULL OR locked_until < UTC_TIMESTAMP()) ORDER BY id LIMIT 20 FOR UPDATE SKIP LOCKED`, { transaction, type: QueryTypes.SELECT })
      if (rows.length) await db.query(`UPDATE outbox_messages SET locked_until = UTC_TIMESTAMP() + INTERVAL 60 SECOND WHERE id IN (${rows.map(r => r.id).join(',')})`, { transaction })
      return rows.length
    }
    try {
      const ta = await a.transaction({ isolationLevel: Transaction.ISOLATION_LEVELS.READ_COMMITTED })
      const tb = await b.transaction({ isolationLevel: Transaction.ISOLATION_LEVELS.READ_COMMITTED })
      // Row locks stay on their node: both claims see the three rows free and lease them.
      expect(await claim(a, ta)).toBe(3)
      expect(await claim(b, tb)).toBe(3)
      await ta.commit()
      const lost = await tb.commit().then(() => null, (e: unknown) => e)
      await tb.rollback().catch(() => { /* already ended by the failed commit */ })
      expect(isDeadlock(lost), String(lost)).toBe(true)
    }
    finally {
      await Promise.all([a.close(), b.close()])
      onNode(NODES[0]!, `DELETE FROM outbox_messages WHERE kind = '${kind}'`)
    }
  })
})

describe('sign-in throttling on a cluster', () => {
  it('counts failures made through both instances (two nodes) together', async () => {
    const email = `nobody-${run}@test.example`
    // A documentation address (RFC 5737 TEST-NET-3) as the client, so the per-address limit of
    // the other tests' failures from 127.0.0.1 does not count here; the instances trust the proxy header.
    const headers = { 'x-forwarded-for': '203.0.113.77' }
    const statuses: number[] = []
    for (let i = 0; i < 10; i++) statuses.push((await client(APP[i % 2]!).post('/api/auth/login', { email, password: 'wrong-password' }, headers)).status)
    expect(statuses).toEqual(Array.from({ length: 10 }, () => 401))
    // The per-account limit is 10 failures (server/services/accounts.ts THROTTLE): the next try is refused on either instance.
    for (const base of APP) expect((await client(base).post('/api/auth/login', { email, password: 'wrong-password' }, headers)).status, base).toBe(429)
  })

  it('lets a session started on one instance continue on the other', async () => {
    const tech = await client(APP[0]!).login(DEMO.technician)
    const other = client(APP[1]!)
    other.cookie = tech.cookie
    const me = await other.get('/api/me')
    expect(me.status).toBe(200)
    expect(me.body.user.email).toBe(DEMO.technician)
  })
})
