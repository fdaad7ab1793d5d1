import { randomBytes } from 'node:crypto'
import { QueryTypes } from 'sequelize'
import { describe, expect, it } from 'vitest'
import { isDeadlock } from '../../server/db'
import { writeRuleGuard } from '../../server/db/guards'
import { DEMO, type ApiClient } from '../helpers/api'
import { APP, NODES, client, clusterConflicts, onNode, pinned } from '../helpers/cluster'
import { makeContent } from '../helpers/content'
import { FACTORY_PASSWORD, makeUser } from '../helpers/db'
import { lastChangeOf, procedureInReview, publishHeldOpen } from '../helpers/late-commit'
import { waitUntil } from '../helpers/stack'

// Rules that a single server keeps with row locks, and search that follows the change log, with
// the two app instances writing through different nodes (the first prefers node 1, the second
// node 2). A row lock binds only its node; what holds across nodes is what certification orders:
// a unique key, or a row both transactions write.
const run = randomBytes(3).toString('hex')
// Two requests sent together do not always overlap in the database; several rounds make a
// collision all but certain, and each round must keep the rule.
const ROUNDS = 6

async function publishedProcedure(author: ApiClient, editor: ApiClient, title: string) {
  const created = await author.post('/api/procedures', { content: makeContent({ title }) })
  expect(created.status, JSON.stringify(created.body)).toBe(201)
  const { procedure, revision } = created.body as { procedure: { id: number, slug: string }, revision: { id: number } }
  expect((await author.post(`/api/revisions/${revision.id}/submit`)).status).toBe(200)
  expect((await editor.post(`/api/revisions/${revision.id}/approve`)).status).toBe(200)
  return procedure
}

const openDrafts = (node: (typeof NODES)[number], procedureId: number, authorId: number) =>
  Number(onNode(node, `SELECT COUNT(*) FROM revisions WHERE procedure_id = ${procedureId} AND author_id = ${authorId} AND state = 'draft'`)[0]?.[0])

describe('one open draft per author and procedure on a cluster', () => {
  it('lets only one of two drafts started at once through the two instances (two nodes) through', async () => {
    const editor = await client(APP[1]!).login(DEMO.editor)
    const procedure = await publishedProcedure(await client(APP[0]!).login(DEMO.author), editor, `Cluster drafts ${run}`)
    const author = await makeUser({ role: 'author' })
    const [onA, onB] = await Promise.all(APP.map(base => client(base).login(author.email, FACTORY_PASSWORD)))
    const conflictsBefore = clusterConflicts()
    for (let round = 0; round < ROUNDS; round++) {
      const answers = await Promise.all([onA!, onB!].map(c => c.post(`/api/procedures/${procedure.slug}/revisions`, {})))
      expect(answers.map(a => a.status).sort(), JSON.stringify(answers.map(a => a.body))).toEqual([201, 409])
      const refused = answers.find(a => a.status === 409)!
      expect(refused.body.message).toMatch(/already have a draft/)
      for (const node of NODES) expect(openDrafts(node, procedure.id, author.id), `round ${round}, node ${node.name}`).toBe(1)
      // Submitted, the draft is no longer open: the next round starts from none.
      const draft = answers.find(a => a.status === 201)!.body.revision as { id: number }
      expect((await onA!.post(`/api/revisions/${draft.id}/submit`)).status).toBe(200)
    }
    console.log(`drafts started at once, ${ROUNDS} rounds: certification conflicts and replication aborts meanwhile: ${clusterConflicts() - conflictsBefore}`)
  })

  it('certifies the unique key: of two drafts inserted through two nodes, each unaware of the other, one commits', async () => {
    const procedure = await publishedProcedure(await client(APP[0]!).login(DEMO.author), await client(APP[1]!).login(DEMO.editor), `Cluster draft key ${run}`)
    const author = await makeUser({ role: 'author' })
    const [a, b] = [pinned(NODES[0]!), pinned(NODES[1]!)]
    const insert = (db: typeof a, transaction: Awaited<ReturnType<typeof a.transaction>>) => db.query(
      'INSERT INTO revisions (procedure_id, state, author_id, content, created_at, updated_at) VALUES (?, \'draft\', ?, \'{}\', UTC_TIMESTAMP(), UTC_TIMESTAMP())',
      { replacements: [procedure.id, author.id], transaction, type: QueryTypes.INSERT },
    )
    try {
      const [ta, tb] = [await a.transaction(), await b.transaction()]
      // Neither node has seen the other's row: both inserts pass where they run.
      await insert(a, ta)
      await insert(b, tb)
      await ta.commit()
      const lost = await tb.commit().then(() => null, (e: unknown) => e)
      await tb.rollback().catch(() => { /* already ended by the failed commit */ })
      expect(isDeadlock(lost), String(lost)).toBe(true)
      for (const node of NODES) expect(openDrafts(node, procedure.id, author.id), `node ${node.name}`).toBe(1)
    }
    finally {
      await Promise.all([a.close(), b.close()])
    }
  })
})

describe('at least one active admin on a cluster', () => {
  it('lets only one of two admins demoting each other at once through the two instances (two nodes) succeed', async () => {
    const [x, y] = [await makeUser({ role: 'admin' }), await makeUser({ role: 'admin' })]
    const activeAdmins = () => NODES.map(n => onNode(n, 'SELECT id FROM users WHERE role = \'admin\' AND active = 1 ORDER BY id').map(r => Number(r[0])))
    // While this runs, the two are the only active admins; the others are active again after it.
    const others = activeAdmins()[0]!.filter(id => id !== x.id && id !== y.id)
    if (others.length) onNode(NODES[0]!, `UPDATE users SET active = 0 WHERE id IN (${others.join(',')})`)
    try {
      const conflictsBefore = clusterConflicts()
      for (let round = 0; round < ROUNDS; round++) {
        const onA = await client(APP[0]!).login(x.email, FACTORY_PASSWORD)
        const onB = await client(APP[1]!).login(y.email, FACTORY_PASSWORD)
        const answers = await Promise.all([onA.patch(`/api/users/${y.id}`, { role: 'editor' }), onB.patch(`/api/users/${x.id}`, { role: 'editor' })])
        // The other request is refused: by the rule (409), or, when the winner's commit came
        // first, already at the session check, since the demotion ended the caller's sessions (401).
        const [winner, refused] = [...answers].sort((a, b) => a.status - b.status)
        expect(winner!.status, JSON.stringify(answers.map(a => a.body))).toBe(200)
        expect([401, 409], JSON.stringify(answers.map(a => a.body))).toContain(refused!.status)
        expect(refused!.body.message).toMatch(refused!.status === 409 ? /at least one active admin/ : /session has ended/)
        const survivor = answers[0]!.status === 200 ? x : y
        const demoted = survivor === x ? y : x
        for (const [i, ids] of activeAdmins().entries()) expect(ids, `round ${round}, node ${NODES[i]!.name}`).toEqual([survivor.id])
        // The survivor makes the other admin again for the next round.
        expect((await (survivor === x ? onA : onB).patch(`/api/users/${demoted.id}`, { role: 'admin' })).status).toBe(200)
      }
      console.log(`admins demoting each other at once, ${ROUNDS} rounds: certification conflicts and replication aborts meanwhile: ${clusterConflicts() - conflictsBefore}`)
    }
    finally {
      if (others.length) onNode(NODES[0]!, `UPDATE users SET active = 1 WHERE id IN (${others.join(',')})`)
      onNode(NODES[0]!, `UPDATE users SET active = 0 WHERE id IN (${x.id},${y.id})`)
    }
  })

  it('certifies the guard row: of two admins demoted through two nodes, each transaction seeing both active, one commits', async () => {
    const [x, y] = [await makeUser({ role: 'admin' }), await makeUser({ role: 'admin' })]
    const [a, b] = [pinned(NODES[0]!), pinned(NODES[1]!)]
    const demote = async (db: typeof a, transaction: Awaited<ReturnType<typeof a.transaction>>, id: number) => {
      // What updateUser checks first: the pair is still there (read, so locked only on this node).
      const seen = await db.query<{ id: number }>(`SELECT id FROM users WHERE id IN (${x.id},${y.id}) AND role = 'admin' AND active = 1 FOR UPDATE`, { transaction, type: QueryTypes.SELECT })
      expect(seen).toHaveLength(2)
      await db.query('UPDATE users SET role = \'editor\' WHERE id = ?', { replacements: [id], transaction, type: QueryTypes.UPDATE })
      await writeRuleGuard('active-admins', transaction, db)
    }
    try {
      const [ta, tb] = [await a.transaction(), await b.transaction()]
      await demote(a, ta, x.id)
      await demote(b, tb, y.id)
      // Committed together, both write sets can pass certification before either is applied on
      // the other's node, where its row locks would have stopped it; without the guard row the
      // two touch different users and both commit.
      const outcomes = await Promise.all([ta, tb].map(t => t.commit().then(() => null, (e: unknown) => e)))
      await Promise.all([ta, tb].map(t => t.rollback().catch(() => { /* ended by its commit */ })))
      const lost = outcomes.filter(o => o !== null)
      expect(lost, String(lost)).toHaveLength(1)
      expect(isDeadlock(lost[0]), String(lost[0])).toBe(true)
      const kept = outcomes[0] === null ? y.id : x.id
      for (const node of NODES) {
        expect(onNode(node, `SELECT id FROM users WHERE id IN (${x.id},${y.id}) AND role = 'admin'`).map(r => Number(r[0])), `node ${node.name}`).toEqual([kept])
      }
    }
    finally {
      await Promise.all([a.close(), b.close()])
      onNode(NODES[0]!, `UPDATE users SET active = 0 WHERE id IN (${x.id},${y.id})`)
    }
  })
})

describe('search on a cluster', () => {
  it('finds a publication committed late, after changes with higher ids were read, on both instances', async () => {
    const word = `latecomer${run}`
    const marker = `quillmarker${run}`
    const author = await client(APP[0]!).login(DEMO.author)
    const editor = await client(APP[0]!).login(DEMO.editor)
    const techs = await Promise.all(APP.map(base => client(base).login(DEMO.technician)))
    const findsEverywhere = async (q: string, slug: string) => {
      for (const t of techs) if (!((await t.get(`/api/search?q=${q}`)).body.hits ?? []).some((h: { slug: string }) => h.slug === slug)) return false
      return true
    }
    const late = await procedureInReview(author, word)
    // Held open on node 1; the later publication goes through the first instance, which writes
    // through node 1 too, so its change-log id is the higher one.
    const db = pinned(NODES[0]!)
    let markerSlug = ''
    try {
      const held = await publishHeldOpen(db, { procedureId: late.procedure.id, revisionId: late.revision.id, reviewerId: (await editor.get('/api/me')).body.user.id })
      try {
        const markerProc = await publishedProcedure(author, editor, `Bench note ${marker}`)
        markerSlug = markerProc.slug
        expect(await lastChangeOf(db, markerProc.id), 'the later publication has the higher change-log id').toBeGreaterThan(held.changeId)
        await waitUntil('the later publication found on both instances', () => findsEverywhere(marker, markerSlug), 30_000, 200)
        expect(await findsEverywhere(word, late.procedure.slug)).toBe(false)
      }
      finally {
        await held.commit()
      }
      await waitUntil('the late publication found on both instances', () => findsEverywhere(word, late.procedure.slug), 30_000, 200)
    }
    finally {
      await db.close()
    }
    for (const slug of [late.procedure.slug, markerSlug]) expect((await editor.post(`/api/procedures/${slug}/retire`, { reason: 'Cluster search check' })).status).toBe(200)
  })
})
