import { mkdirSync, rmSync } from 'node:fs'
import { join } from 'node:path'
import { ensureGaleraInstalled, killNode, nodeFiles, nodePid, startCluster, startNode, stopCluster, type GaleraCluster, type GaleraNode } from './galera'
import { ensureDatabase, recreateDatabase } from './mariadb'
import { ensureNginxInstalled, proxyPid, reconfigureProxy, startProxy, stopProxy, type LocalProxy } from './nginx'
import { done, readPid, step } from './proc'
import {
  DB_NAME, DB_USER, ROOT, appFiles, buildApp, buildIsStale, runScript, stackEnv, startApp, startMailCatcher, startObjectStore,
  stopApp, stopMailCatcher, stopObjectStore, type StackProfile,
} from './stack'

/**
 * A cluster on loopback, built from this checkout: `nodes` MariaDB servers in one Galera
 * cluster, `apps` instances of the built app, nginx in front of them, one object store and one
 * mail catcher shared by all. Three of them can run side by side: `npm run cluster`'s (local),
 * the cluster test's and the cluster benchmark's, each with its data under .data-cluster/<kind>/.
 *
 * Ports, all movable: BENCHLORE_CLUSTER_PORT (default 3460) is the local proxy, +1… the app
 * instances, +10 the object store, +11 the mail catcher; the test cluster sits 20 below, the
 * bench cluster 20 above. BENCHLORE_CLUSTER_DB_PORT (3430) is the first database node's client
 * port, one per node after it (test and bench follow the local nodes).
 * BENCHLORE_CLUSTER_GALERA_PORT (4600) is the first node's replication port, ten apart per
 * node, each using three in a row. BENCHLORE_PORT_OFFSET moves all of them as it moves the
 * single-server stacks, so checkouts run side by side with offsets 100 apart.
 */
export type ClusterKind = 'local' | 'test' | 'bench'

export interface ClusterProfile {
  kind: ClusterKind
  dataDir: string
  proxyPort: number
  appPorts: number[]
  s3Port: number
  smtpPort: number
  db: GaleraCluster
}

const num = (v: string | undefined, fallback: number, min = 1, max = 65535) => {
  const n = v && /^\d+$/.test(v) ? Number(v) : fallback
  if (n < min || n > max) throw new Error(`${v} is out of range (${min}–${max})`)
  return n
}

export function clusterProfile(kind: ClusterKind, env: NodeJS.ProcessEnv = process.env): ClusterProfile {
  const k = { local: 0, test: 1, bench: 2 }[kind]
  const nodes = num(env.BENCHLORE_CLUSTER_NODES, 3, 1, 9)
  const apps = num(env.BENCHLORE_CLUSTER_APPS, 2, 1, 9)
  const offset = num(env.BENCHLORE_PORT_OFFSET, 0, 0, 50_000)
  const http = num(env.BENCHLORE_CLUSTER_PORT, 3460) + offset + { local: 0, test: -20, bench: 20 }[kind]
  const dbPort = num(env.BENCHLORE_CLUSTER_DB_PORT, 3430) + offset + nodes * k
  const galeraPort = num(env.BENCHLORE_CLUSTER_GALERA_PORT, 4600) + offset + 10 * nodes * k
  const dataDir = join(ROOT, '.data-cluster', kind)
  return {
    kind,
    dataDir,
    proxyPort: http,
    appPorts: Array.from({ length: apps }, (_, i) => http + 1 + i),
    s3Port: http + 10,
    smtpPort: http + 11,
    db: {
      name: `benchlore-${kind}`,
      nodes: Array.from({ length: nodes }, (_, i): GaleraNode => ({ name: `n${i + 1}`, dir: join(dataDir, 'db', `n${i + 1}`), port: dbPort + i, galeraPort: galeraPort + 10 * i })),
    },
  }
}

/** The same folders and ports in the shape the single-server stack helpers take. */
export function asStack(p: ClusterProfile): StackProfile {
  return { name: 'test', dataDir: p.dataDir, ports: { app: p.proxyPort, db: p.db.nodes[0]!.port, s3: p.s3Port, smtp: p.smtpPort } }
}

export const proxyUrl = (p: ClusterProfile) => `http://127.0.0.1:${p.proxyPort}`
export const appUrl = (p: ClusterProfile, i: number) => `http://127.0.0.1:${p.appPorts[i]}`
export const appInstance = (i: number) => `app-${i + 1}`

export function proxyOf(p: ClusterProfile, instances = p.appPorts.map((_, i) => i)): LocalProxy {
  return { dir: join(p.dataDir, 'proxy'), port: p.proxyPort, upstreams: instances.map(i => p.appPorts[i]!), maxBodyMb: 64 }
}

/**
 * Each instance lists every node, starting from a different one, so the instances write through
 * different nodes and each fails over to the next node in its list.
 */
export function dbHostsFor(p: ClusterProfile, i: number): string {
  const ports = p.db.nodes.map(n => n.port)
  const start = i % ports.length
  return [...ports.slice(start), ...ports.slice(0, start)].map(port => `127.0.0.1:${port}`).join(',')
}

/**
 * The environment of app instance `i` (or of a script, i = 0): the cluster's nodes, reads that
 * wait for writes committed through other nodes (wsrep_sync_wait = 1), and the proxy as the
 * public origin, trusted for the client address.
 */
export function clusterEnv(p: ClusterProfile, i = 0, extra: Record<string, string> = {}): NodeJS.ProcessEnv {
  return {
    ...stackEnv(asStack(p)),
    NUXT_DB_HOSTS: dbHostsFor(p, i),
    NUXT_DB_SYNC_WAIT: '1',
    NUXT_APP_ORIGIN: proxyUrl(p),
    NUXT_TRUST_PROXY: 'true',
    ...extra,
  }
}

/** Database, user and grants, made on the first node; Galera replicates them to the others. */
function provisionDatabase(p: ClusterProfile, fresh: boolean) {
  const first = { dir: p.db.nodes[0]!.dir, port: p.db.nodes[0]!.port }
  if (fresh) recreateDatabase(first, DB_NAME)
  ensureDatabase(first, DB_NAME, DB_USER, clusterEnv(p).NUXT_DB_PASSWORD!)
}

export async function startAppInstance(p: ClusterProfile, i: number, extra: Record<string, string> = {}): Promise<void> {
  if (readPid(appFiles(asStack(p), appInstance(i)).pid)) return
  await startApp(asStack(p), { port: p.appPorts[i], instance: appInstance(i), env: clusterEnv(p, i, extra) })
}

/** kill -9 of one app instance. */
export function killAppInstance(p: ClusterProfile, i: number): number | null {
  const pid = readPid(appFiles(asStack(p), appInstance(i)).pid)
  if (pid) process.kill(pid, 'SIGKILL')
  return pid
}

/** Faster outbox polling and retries, so the tests see mail go out in well under a second. */
export const FAST_MAIL_ENV = { NUXT_MAIL_POLL_MS: '300', NUXT_MAIL_RETRY_BASE_MS: '1000' }

export interface UpOptions {
  /** Empty the database first (tests and benchmarks). */
  fresh?: boolean
  /** Extra environment for the app instances. */
  appEnv?: Record<string, string>
}

/** Brings up whatever of the cluster is not running; the parts that run are left as they are. */
export async function clusterUp(p: ClusterProfile, opts: UpOptions = {}): Promise<void> {
  const t = Date.now()
  // The operator's external services are for `npm start`; a cluster provisions its own.
  for (const k of Object.keys(process.env)) if (/^NUXT_(DB|S3|SMTP|MAIL)_/.test(k)) delete process.env[k]
  ensureGaleraInstalled()
  ensureNginxInstalled()
  mkdirSync(p.dataDir, { recursive: true })
  if (buildIsStale()) await buildApp()
  else done('app build is up to date')
  const stack = asStack(p)
  await Promise.all([startCluster(p.db), startObjectStore(stack), startMailCatcher(stack)])
  provisionDatabase(p, Boolean(opts.fresh))
  Object.assign(process.env, { NUXT_DB_HOSTS: clusterEnv(p).NUXT_DB_HOSTS, NUXT_DB_SYNC_WAIT: '1' })
  step('database: applying migrations through the cluster…')
  await runScript(stack, 'scripts/migrate.ts')
  step('demo workshop: seeding (idempotent)…')
  await runScript(stack, 'scripts/seed.ts')
  step(`app: starting ${p.appPorts.length} instances on ${p.appPorts.map(port => `127.0.0.1:${port}`).join(', ')}…`)
  await Promise.all(p.appPorts.map((_, i) => startAppInstance(p, i, opts.appEnv)))
  await startProxy(proxyOf(p))
  done(`cluster up: ${proxyUrl(p)} → ${p.appPorts.length} app instances → ${p.db.nodes.length} database nodes`, t)
}

/** Stops everything the cluster's pid files name, and nothing else: proxy, apps, shared services, nodes. */
export async function clusterDown(p: ClusterProfile): Promise<void> {
  const stack = asStack(p)
  await stopProxy(proxyOf(p))
  await Promise.all(p.appPorts.map((_, i) => stopApp(stack, appInstance(i))))
  await Promise.all([stopObjectStore(stack), stopMailCatcher(stack)])
  await stopCluster(p.db)
}

/** Stops and forgets a cluster's data (tests and benchmarks start from nothing). */
export async function clusterWipe(p: ClusterProfile): Promise<void> {
  await clusterDown(p)
  rmSync(p.dataDir, { recursive: true, force: true })
}

export interface ClusterStatus {
  proxy: string
  apps: Array<{ url: string, pid: number | null }>
  db: Array<{ port: number, pid: number | null }>
}

export function clusterStatus(p: ClusterProfile): ClusterStatus {
  return {
    proxy: proxyUrl(p),
    apps: p.appPorts.map((_, i) => ({ url: appUrl(p, i), pid: readPid(appFiles(asStack(p), appInstance(i)).pid) })),
    db: p.db.nodes.map(n => ({ port: n.port, pid: nodePid(n) })),
  }
}

export { killNode, nodeFiles, proxyPid, reconfigureProxy, startNode }
