import { randomBytes } from 'node:crypto'
import { readFileSync, rmSync } from 'node:fs'
import { join } from 'node:path'
import sharp from 'sharp'
import { beforeAll, beforeEach, describe, expect, it } from 'vitest'
import { FAST_MAIL_ENV, killAppInstance, killNode, nodeFiles, startAppInstance, startNode } from '../../scripts/lib/cluster'
import { nodeStatus, waitSynced } from '../../scripts/lib/galera'
import { startObjectStore, stopObjectStore } from '../../scripts/lib/stack'
import { DEMO } from '../helpers/api'
import { NODES, PROXY, WriteLoad, client, cluster, missingOn, onNode, stack, type Ack } from '../helpers/cluster'
import { waitUntil } from '../helpers/stack'

// Faults under a steady write load through the proxy. Every write the cluster acknowledged
// (a 201 with the new record's id) goes to a log file; at the end each one must be present on
// every node. While a part is down, a request may fail only as a clear 503: never a 500, a
// reset connection or a request left hanging (each has 20 s).
const run = randomBytes(3).toString('hex')
const ACK_LOG = join(cluster.dataDir, 'acknowledged-writes.jsonl')
const ANSWERS = new Set(['201', '503'])
const allAcks: Ack[] = []
let tech: ReturnType<typeof client>

async function steadyLoad(tag: string): Promise<WriteLoad> {
  const load = new WriteLoad({ baseUrl: PROXY, cookie: tech.cookie, tag: `${run}-${tag}`, ackFile: ACK_LOG, deviceType: 'rotary-led-dimmer-trailing-edge', symptom: 'does-not-dim' })
  load.start()
  await load.untilAcks(20)
  return load
}

/** Waits for `more` acknowledgements after the fault, stops the load and reports what it saw. */
async function finish(load: WriteLoad, faultAt: number, more: number, what: string) {
  const before = load.acks.filter(a => a.at < faultAt).length
  await load.untilAcks(before + more)
  await load.stop()
  allAcks.push(...load.acks)
  const after = load.summary(faultAt)
  const firstOk = load.acks.find(a => a.at >= faultAt)
  console.log(`${what}: answers since the fault ${JSON.stringify(after.byStatus)}, longest request ${after.maxMs} ms, `
    + `first acknowledged write ${firstOk ? firstOk.at - faultAt : '–'} ms after it; ${load.acks.length} writes acknowledged in this phase`)
  return after
}

beforeAll(async () => {
  rmSync(ACK_LOG, { force: true })
  tech = await client(PROXY).login(DEMO.technician)
})

/** Whatever an earlier test left stopped comes back first, so each fault starts from a whole cluster. */
beforeEach(async () => {
  for (const node of NODES) await startNode(cluster.db, node)
  for (const [i] of cluster.appPorts.entries()) await startAppInstance(cluster, i, FAST_MAIL_ENV)
  await startObjectStore(stack)
})

describe('faults under a steady write load through the proxy', () => {
  it('kill -9 of a database node: writes go on or answer 503, and the node rejoins with what it missed', async () => {
    const load = await steadyLoad('db')
    const victim = NODES[0]! // the first instance's preferred node
    const killedAt = Date.now()
    expect(killNode(victim)).toBeTruthy()
    const after = await finish(load, killedAt, 40, `database node ${victim.name} killed`)
    expect(Object.keys(after.byStatus).filter(s => !ANSWERS.has(s)), JSON.stringify(load.outcomes.filter(o => !ANSWERS.has(String(o.status))).slice(0, 5))).toEqual([])

    // The survivors still form the primary component; then the node comes back and catches up.
    for (const node of NODES.slice(1)) expect(nodeStatus(node)).toMatchObject({ clusterStatus: 'Primary', clusterSize: NODES.length - 1 })
    const logBefore = readFileSync(nodeFiles(victim).log, 'utf8').length
    await startNode(cluster.db, victim)
    await waitSynced(victim)
    const rejoinLog = readFileSync(nodeFiles(victim).log, 'utf8').slice(logBefore)
    // The joiner asks for write sets from the one after its own position: "f: 0" means it had none (a full copy).
    const from = Number(/IST uuid:\S+ f: (\d+)/.exec(rejoinLog)?.[1] ?? 0)
    const transfer = from > 0 ? `IST (write sets from seqno ${from} on)` : 'SST (full copy)'
    console.log(`node ${victim.name} rejoined by ${transfer}`)
    expect(nodeStatus(victim)).toMatchObject({ state: 'Synced', clusterSize: NODES.length })
    for (const node of NODES) expect(missingOn(node, load.acks), `acknowledged writes missing on ${node.name}`).toEqual([])
  })

  it('kill -9 of an app instance: the proxy routes around it and nobody is signed out', async () => {
    const load = await steadyLoad('app')
    const killedAt = Date.now()
    expect(killAppInstance(cluster, 1)).toBeTruthy()
    const after = await finish(load, killedAt, 40, 'app instance 2 killed')
    expect(Object.keys(after.byStatus).filter(s => !ANSWERS.has(s))).toEqual([])
    // The same sealed cookie, through the proxy, many times over: only the survivor answers.
    for (let i = 0; i < 6; i++) {
      const me = await tech.get('/api/me')
      expect(me.status).toBe(200)
      expect(me.body.user.email).toBe(DEMO.technician)
    }
    await startAppInstance(cluster, 1, FAST_MAIL_ENV)
    await waitUntil('the restarted instance to answer through the proxy', async () => (await tech.get('/api/me')).status === 200, 15_000)
  })

  it('object store down: uploads through the proxy answer 503 and leave no row on any node', async () => {
    const photo = await sharp({ create: { width: 640, height: 480, channels: 3, background: { r: 90, g: 60, b: 30 } } }).jpeg().toBuffer()
    const upload = () => {
      const fd = new FormData()
      fd.append('file', new Blob([photo], { type: 'image/jpeg' }), 'bench.jpg')
      return tech.post('/api/uploads', fd)
    }
    const rows = () => NODES.map(n => Number(onNode(n, 'SELECT COUNT(*) FROM attachments')[0]?.[0]))
    const before = rows()
    await stopObjectStore(stack)
    try {
      for (let i = 0; i < 4; i++) {
        const res = await upload()
        expect(res.status).toBe(503)
        expect(res.body.message).toMatch(/object store/)
      }
      expect(rows()).toEqual(before)
    }
    finally {
      await startObjectStore(stack)
    }
    expect((await upload()).status).toBe(201)
  })

  it('every acknowledged write of the run, read back from its log, is on every node', () => {
    const logged = readFileSync(ACK_LOG, 'utf8').trim().split('\n').map(l => JSON.parse(l) as Ack)
    expect(logged.length).toBe(allAcks.length)
    expect(logged.length).toBeGreaterThan(100)
    for (const node of NODES) expect(missingOn(node, logged), `node ${node.name}`).toEqual([])
  })
})
