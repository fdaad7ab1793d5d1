import { execFileSync, spawnSync } from 'node:child_process'
import { chownSync, existsSync, mkdirSync, readdirSync, readFileSync, statSync, writeFileSync } from 'node:fs'
import { join } from 'node:path'
import { setTimeout as sleep } from 'node:timers/promises'
import { ensureDebianPackages, hasCommand } from './debian'
import { ensureMariadbInstalled, mariadbd } from './mariadb'
import { done, isAlive, portOpen, readPid, startDetached, step, stopPidFile } from './proc'

/**
 * A Galera cluster of private MariaDB servers on loopback: each node's data, socket and logs in
 * a folder of its own. Node i listens for clients on `port` and for its peers on `galeraPort`
 * (group communication), `galeraPort + 1` (incremental state transfer, IST) and `galeraPort + 2`
 * (full state transfer, SST, by rsync).
 */
export interface GaleraNode {
  name: string
  dir: string
  port: number
  galeraPort: number
}

export interface GaleraCluster {
  name: string
  nodes: GaleraNode[]
}

const PROVIDERS = ['/usr/lib/galera/libgalera_smm.so', '/usr/lib/galera-4/libgalera_smm.so', '/usr/lib64/galera-4/libgalera_smm.so', '/usr/lib/libgalera_smm.so']
export const galeraProvider = () => PROVIDERS.find(p => existsSync(p)) ?? null

/** Installs what a cluster needs that is missing: the server, the Galera library, rsync for state transfers. */
export function ensureGaleraInstalled(): void {
  ensureMariadbInstalled()
  ensureDebianPackages([
    { name: 'galera-4', present: () => Boolean(galeraProvider()), purpose: 'the Galera replication library' },
    { name: 'rsync', present: hasCommand('rsync'), purpose: 'state transfers between Galera nodes' },
    { name: 'iproute2', present: () => hasCommand('ss')() || hasCommand('lsof')(), purpose: 'the state-transfer script checks its listening port with ss' },
  ])
}

export const nodeFiles = (node: GaleraNode) => ({
  data: join(node.dir, 'data'),
  socket: join(node.dir, 'mysqld.sock'),
  pid: join(node.dir, 'mariadbd.pid'),
  log: join(node.dir, 'error.log'),
  stdout: join(node.dir, 'stdout.log'),
  recoverLog: join(node.dir, 'recover.log'),
  // The server's own temporary folder: TMPDIR of whoever starts it may not be writable by its user.
  tmp: join(node.dir, 'tmp'),
})

/**
 * Under root the nodes run as Debian's `mysql` user, as the packaged server does: rsync's
 * daemon, which receives a full state transfer, drops root for `nobody` and could not write a
 * root-owned data folder.
 */
function serverUser(): { name: string, uid: number, gid: number } | null {
  if (process.getuid?.() !== 0) return null
  const r = spawnSync('id', ['-u', 'mysql'], { encoding: 'utf8' })
  const g = spawnSync('id', ['-g', 'mysql'], { encoding: 'utf8' })
  if (r.status !== 0 || g.status !== 0) throw new Error('the "mysql" system user (created by Debian\'s mariadb-server) is missing')
  return { name: 'mysql', uid: Number(r.stdout.trim()), gid: Number(g.stdout.trim()) }
}

function chownTree(path: string, uid: number, gid: number) {
  chownSync(path, uid, gid)
  if (!statSync(path).isDirectory()) return
  for (const entry of readdirSync(path)) chownTree(join(path, entry), uid, gid)
}

/** Creates the node's folder, owned by the user the server runs as, and checks that user can reach it. */
function prepareDir(node: GaleraNode) {
  mkdirSync(nodeFiles(node).data, { recursive: true })
  mkdirSync(nodeFiles(node).tmp, { recursive: true })
  const user = serverUser()
  if (!user) return
  chownTree(node.dir, user.uid, user.gid)
  const probe = spawnSync('runuser', ['-u', user.name, '--', 'test', '-w', nodeFiles(node).data])
  if (probe.status !== 0) {
    throw new Error(`the database nodes run as the "mysql" user, which cannot reach ${node.dir}; make its parent folders `
      + 'traversable (chmod o+x on each) or move the checkout to a folder other users can enter')
  }
}

function client(node: GaleraNode, sql: string): string {
  return execFileSync('mariadb', ['--no-defaults', `--socket=${nodeFiles(node).socket}`, '-uroot', '--batch', '--skip-column-names', '-e', sql],
    { encoding: 'utf8', stdio: ['ignore', 'pipe', 'pipe'], timeout: 10_000 })
}

export interface NodeStatus {
  state: string
  clusterSize: number
  clusterStatus: string
}

/** What the node says about itself, or null when it does not answer. */
export function nodeStatus(node: GaleraNode): NodeStatus | null {
  try {
    const out = client(node, 'SHOW GLOBAL STATUS WHERE Variable_name IN (\'wsrep_local_state_comment\', \'wsrep_cluster_size\', \'wsrep_cluster_status\')')
    const v = new Map(out.trim().split('\n').map(l => l.split('\t') as [string, string]))
    return { state: v.get('wsrep_local_state_comment') ?? '?', clusterSize: Number(v.get('wsrep_cluster_size') ?? 0), clusterStatus: v.get('wsrep_cluster_status') ?? '?' }
  }
  catch {
    return null
  }
}

/**
 * Runs SQL as root on one node (test checks), reading what the whole cluster has committed: a
 * node applies other nodes' write sets shortly after they commit, and wsrep_sync_wait makes
 * the read wait for that.
 */
export const nodeQuery = (node: GaleraNode, sql: string) => client(node, `SET SESSION wsrep_sync_wait = 1; ${sql}`)

export function nodePid(node: GaleraNode): number | null {
  return readPid(nodeFiles(node).pid)
}

function serverArgs(cluster: GaleraCluster, node: GaleraNode): string[] {
  const f = nodeFiles(node)
  const user = serverUser()
  const g = node.galeraPort
  const provider = [
    `gmcast.listen_addr=tcp://127.0.0.1:${g}`,
    `ist.recv_addr=127.0.0.1:${g + 1}`,
    'gcache.size=64M',
    // A killed peer is declared gone after a few seconds on loopback (defaults: 5 s and 15 s),
    // so writes stall only that long before the others carry on without it.
    'evs.keepalive_period=PT1S',
    'evs.suspect_timeout=PT3S',
    'evs.inactive_timeout=PT6S',
    'evs.install_timeout=PT6S',
  ].join(';')
  return [
    '--no-defaults',
    ...(user ? [`--user=${user.name}`] : []),
    `--datadir=${f.data}`, `--socket=${f.socket}`, `--pid-file=${join(node.dir, 'mysqld.pid')}`, `--tmpdir=${f.tmp}`,
    `--port=${node.port}`, '--bind-address=127.0.0.1', '--skip-name-resolve', `--log-error=${f.log}`,
    '--innodb-log-file-size=16M', '--innodb-buffer-pool-size=64M', '--character-set-server=utf8mb4',
    '--collation-server=utf8mb4_unicode_ci', '--max-connections=300',
    // What Galera requires of the server: row-based replication, InnoDB, interleaved auto-increment locks.
    '--binlog-format=ROW', '--default-storage-engine=InnoDB', '--innodb-autoinc-lock-mode=2',
    '--wsrep-on=ON', `--wsrep-provider=${galeraProvider()}`, `--wsrep-cluster-name=${cluster.name}`,
    `--wsrep-cluster-address=gcomm://${cluster.nodes.map(n => `127.0.0.1:${n.galeraPort}`).join(',')}`,
    `--wsrep-node-name=${node.name}`, `--wsrep-node-address=127.0.0.1:${g}`, `--wsrep-node-incoming-address=127.0.0.1:${node.port}`,
    '--wsrep-sst-method=rsync', `--wsrep-sst-receive-address=127.0.0.1:${g + 2}`,
    `--wsrep-provider-options=${provider}`,
    '--wsrep-log-conflicts=ON',
  ]
}

interface GraState { uuid: string, seqno: number, safeToBootstrap: boolean }

function readGrastate(node: GaleraNode): GraState | null {
  const file = join(nodeFiles(node).data, 'grastate.dat')
  if (!existsSync(file)) return null
  const text = readFileSync(file, 'utf8')
  const uuid = /^uuid:\s*(\S+)/m.exec(text)?.[1] ?? ''
  const seqno = Number(/^seqno:\s*(-?\d+)/m.exec(text)?.[1] ?? -1)
  return { uuid, seqno, safeToBootstrap: /^safe_to_bootstrap:\s*1/m.test(text) }
}

const NO_HISTORY = '00000000-0000-0000-0000-000000000000'
const hasData = (node: GaleraNode) => existsSync(join(nodeFiles(node).data, 'mysql'))

/**
 * After a crash the state file says seqno -1; the position is in InnoDB's own log. Reading it
 * (`--wsrep-recover`, what Debian's service script does before each start) lets the node ask
 * its peers for the missing write sets only (IST) instead of a full copy (SST).
 */
function recoverPosition(cluster: GaleraCluster, node: GaleraNode): { uuid: string, seqno: number } | null {
  const f = nodeFiles(node)
  const args = serverArgs(cluster, node).map((a) => {
    if (a.startsWith('--log-error=')) return `--log-error=${f.recoverLog}`
    if (a.startsWith('--socket=')) return `--socket=${join(node.dir, 'recover.sock')}`
    if (a.startsWith('--pid-file=')) return `--pid-file=${join(node.dir, 'recover.pid')}`
    return a
  })
  writeFileSync(f.recoverLog, '')
  const user = serverUser()
  if (user) chownSync(f.recoverLog, user.uid, user.gid)
  spawnSync(mariadbd()!, [...args, '--wsrep-recover'], { stdio: 'ignore', timeout: 120_000 })
  const m = /Recovered position:\s*([0-9a-f-]{36}):(-?\d+)/.exec(readFileSync(f.recoverLog, 'utf8'))
  return m ? { uuid: m[1]!, seqno: Number(m[2]) } : null
}

function markSafeToBootstrap(node: GaleraNode, state: { uuid: string, seqno: number }) {
  const file = join(nodeFiles(node).data, 'grastate.dat')
  writeFileSync(file, `# GALERA saved state\nversion: 2.1\nuuid:    ${state.uuid}\nseqno:   ${state.seqno}\nsafe_to_bootstrap: 1\n`)
  const user = serverUser()
  if (user) chownSync(file, user.uid, user.gid)
}

function tail(file: string, lines = 25): string {
  return existsSync(file) ? readFileSync(file, 'utf8').trimEnd().split('\n').slice(-lines).join('\n') : '(no log)'
}

/** Waits until the node is Synced with a primary cluster, or fails with the end of its log. */
export async function waitSynced(node: GaleraNode, timeoutMs = 240_000): Promise<void> {
  const until = Date.now() + timeoutMs
  while (Date.now() < until) {
    const s = nodeStatus(node)
    if (s?.state === 'Synced' && s.clusterStatus === 'Primary') return
    const pid = nodePid(node)
    if (!pid) throw new Error(`database node ${node.name} stopped while starting; the end of ${nodeFiles(node).log}:\n${tail(nodeFiles(node).log)}`)
    await sleep(250)
  }
  throw new Error(`database node ${node.name} did not join its cluster within ${Math.round(timeoutMs / 1000)} s; the end of its log:\n${tail(nodeFiles(node).log)}`)
}

/**
 * Starts one node (no-op when it runs). `bootstrap` starts a new primary component from this
 * node's data (`--wsrep-new-cluster`); otherwise the node joins the others and receives what it
 * lacks: IST when their write-set cache still holds it, else a full copy.
 */
export async function startNode(cluster: GaleraCluster, node: GaleraNode, opts: { bootstrap?: boolean, wait?: boolean } = {}): Promise<void> {
  if (nodePid(node)) return
  const f = nodeFiles(node)
  for (const port of [node.port, node.galeraPort, node.galeraPort + 1, node.galeraPort + 2]) {
    if (await portOpen(port)) throw new Error(`port ${port} (database node ${node.name}) is already in use; choose other ports (BENCHLORE_CLUSTER_DB_PORT, BENCHLORE_CLUSTER_GALERA_PORT) or stop what uses it`)
  }
  const fresh = !hasData(node)
  if (fresh && opts.bootstrap) {
    prepareDir(node)
    const user = serverUser()
    execFileSync('mariadb-install-db', ['--no-defaults', `--user=${user?.name ?? (process.env.USER || 'root')}`, `--datadir=${f.data}`, '--auth-root-authentication-method=normal',
      '--skip-test-db', '--skip-name-resolve', '--innodb-log-file-size=16M'], { stdio: 'ignore' })
  }
  prepareDir(node)
  const extra: string[] = []
  const saved = readGrastate(node)
  if (!fresh && saved && saved.seqno < 0 && saved.uuid !== NO_HISTORY) {
    const recovered = recoverPosition(cluster, node)
    if (recovered && recovered.seqno >= 0) extra.push(`--wsrep-start-position=${recovered.uuid}:${recovered.seqno}`)
  }
  if (opts.bootstrap) extra.push('--wsrep-new-cluster')
  startDetached(mariadbd()!, [...serverArgs(cluster, node), ...extra], { logFile: f.stdout, pidFile: f.pid })
  if (opts.wait !== false) await waitSynced(node)
}

/**
 * Which node a stopped cluster restarts from: the one Galera marked safe (the last to leave a
 * clean shutdown), else after a crash the one whose recovered position is furthest ahead.
 */
function bootstrapNode(cluster: GaleraCluster): GaleraNode {
  const withData = cluster.nodes.filter(hasData)
  if (!withData.length) return cluster.nodes[0]!
  const safe = withData.find(n => readGrastate(n)?.safeToBootstrap)
  if (safe) return safe
  let best: { node: GaleraNode, uuid: string, seqno: number } | null = null
  for (const node of withData) {
    const saved = readGrastate(node)
    const pos = saved && saved.seqno >= 0 ? { uuid: saved.uuid, seqno: saved.seqno } : recoverPosition(cluster, node)
    if (pos && pos.uuid !== NO_HISTORY && (!best || pos.seqno > best.seqno)) best = { node, ...pos }
  }
  if (!best) return withData[0]!
  markSafeToBootstrap(best.node, best)
  return best.node
}

/** Starts every node: bootstraps when none runs, then the others join one after another. */
export async function startCluster(cluster: GaleraCluster): Promise<void> {
  ensureGaleraInstalled()
  const running = cluster.nodes.filter(n => nodePid(n))
  const t = Date.now()
  if (!running.length) {
    const first = bootstrapNode(cluster)
    step(`database: bootstrapping the Galera cluster "${cluster.name}" from ${first.name} on 127.0.0.1:${first.port}…`)
    await startNode(cluster, first, { bootstrap: true })
  }
  // The others join together; a donor serves one state transfer at a time, and a joiner
  // waits for a free one.
  const joining = cluster.nodes.filter(n => !nodePid(n))
  if (joining.length) step(`database: ${joining.map(n => `${n.name} (127.0.0.1:${n.port})`).join(', ')} joining (state transfer)…`)
  for (const node of joining) await startNode(cluster, node, { wait: false })
  await Promise.all(joining.map(n => waitSynced(n)))
  done(`Galera cluster of ${cluster.nodes.length} nodes in step (ports ${cluster.nodes.map(n => n.port).join(', ')})`, t)
}

/** A clean stop, one node after another, the first node last: it is then safe to bootstrap from. */
export async function stopCluster(cluster: GaleraCluster): Promise<void> {
  for (const node of [...cluster.nodes].reverse()) await stopPidFile(nodeFiles(node).pid, 60_000)
}

/** kill -9: what a crashed server or a pulled plug looks like to the others. */
export function killNode(node: GaleraNode): number | null {
  const pid = nodePid(node)
  if (pid && isAlive(pid)) process.kill(pid, 'SIGKILL')
  return pid
}
