import { appendFileSync, mkdirSync } from 'node:fs'
import { join } from 'node:path'
import { setTimeout as sleep } from 'node:timers/promises'
import { appUrl, asStack, clusterProfile, proxyUrl } from '../../scripts/lib/cluster'
import { nodeQuery, type GaleraNode } from '../../scripts/lib/galera'
import { DB_NAME } from '../../scripts/lib/stack'
import { createSequelize, dbConfigFromEnv } from '../../server/db'
import { ApiClient } from './api'

/** The cluster `npm run test:cluster` started: its ports, folders and nodes. */
export const cluster = clusterProfile('test')
export const stack = asStack(cluster)
export const PROXY = proxyUrl(cluster)
export const APP = cluster.appPorts.map((_, i) => appUrl(cluster, i))
export const NODES = cluster.db.nodes

/** Rows of a query run as root on one node, straight on its socket (no app, no failover). */
export function onNode(node: GaleraNode, sql: string): string[][] {
  const out = nodeQuery(node, `USE \`${DB_NAME}\`; ${sql}`).trim()
  return out ? out.split('\n').map(l => l.split('\t')) : []
}

/** A database connection pinned to one node (no failover), as an app instance or a deploy script would have. */
export function pinned(node: GaleraNode, name?: string) {
  const cfg = dbConfigFromEnv()
  return createSequelize({ ...cfg, ...(name ? { name } : {}), hosts: `127.0.0.1:${node.port}` })
}

/** Write sets this node lost to certification, and local transactions aborted by replicated ones. */
export function conflictCounters(node: GaleraNode): number {
  const rows = nodeQuery(node, 'SHOW GLOBAL STATUS WHERE Variable_name IN (\'wsrep_local_cert_failures\', \'wsrep_local_bf_aborts\')').trim().split('\n')
  return rows.reduce((sum, r) => sum + Number(r.split('\t')[1] ?? 0), 0)
}

export const clusterConflicts = () => NODES.reduce((sum, n) => sum + conflictCounters(n), 0)

export function client(base: string): ApiClient {
  return new ApiClient(base)
}

export interface Ack { id: number, jobRef: string, at: number }
export interface Outcome { status: number | 'error', startedAt: number, ms: number, detail?: string }

/**
 * A steady write load through the proxy: `workers` loops, each creating a repair record as the
 * signed-in technician and waiting for the answer (at most `timeoutMs`) before the next. Every
 * 201 is an acknowledged write, kept in memory and appended to `ackFile` (one JSON line each)
 * so it can be checked on every node afterwards.
 */
export class WriteLoad {
  readonly acks: Ack[] = []
  readonly outcomes: Outcome[] = []
  private running = false
  private loops: Array<Promise<void>> = []
  private seq = 0
  private waiters: Array<{ n: number, resolve: () => void }> = []

  constructor(private readonly opts: { baseUrl: string, cookie: string, tag: string, ackFile: string, deviceType: string, symptom: string, workers?: number, timeoutMs?: number }) {
    mkdirSync(join(opts.ackFile, '..'), { recursive: true })
  }

  start(): void {
    this.running = true
    this.loops = Array.from({ length: this.opts.workers ?? 4 }, () => this.loop())
  }

  async stop(): Promise<void> {
    this.running = false
    await Promise.all(this.loops)
  }

  /** Resolves once `n` writes have been acknowledged in all. */
  async untilAcks(n: number, timeoutMs = 90_000): Promise<void> {
    if (this.acks.length >= n) return
    await Promise.race([
      new Promise<void>(resolve => this.waiters.push({ n, resolve })),
      sleep(timeoutMs).then(() => {
        throw new Error(`${n} acknowledged writes expected, ${this.acks.length} within ${timeoutMs / 1000} s; last outcomes: ${JSON.stringify(this.outcomes.slice(-5))}`)
      }),
    ])
  }

  private async loop(): Promise<void> {
    while (this.running) {
      const jobRef = `${this.opts.tag}-${++this.seq}`
      const startedAt = Date.now()
      let outcome: Outcome
      try {
        const res = await fetch(`${this.opts.baseUrl}/api/records`, {
          method: 'POST',
          headers: { 'content-type': 'application/json', 'cookie': this.opts.cookie },
          body: JSON.stringify({ deviceType: this.opts.deviceType, symptoms: [this.opts.symptom], unit: { model: 'Load test unit', serial: '', jobRef } }),
          signal: AbortSignal.timeout(this.opts.timeoutMs ?? 20_000),
        })
        const body = await res.json().catch(() => null) as { record?: { id: number }, message?: string } | null
        outcome = { status: res.status, startedAt, ms: Date.now() - startedAt, detail: res.status === 201 ? undefined : body?.message }
        if (res.status === 201 && body?.record) this.ack({ id: body.record.id, jobRef, at: Date.now() })
      }
      catch (error) {
        outcome = { status: 'error', startedAt, ms: Date.now() - startedAt, detail: (error as Error).message }
      }
      this.outcomes.push(outcome)
      // Back off a little while the service is answering 503, as a well-behaved client does.
      if (outcome.status !== 201) await sleep(250)
    }
  }

  private ack(a: Ack) {
    this.acks.push(a)
    appendFileSync(this.opts.ackFile, `${JSON.stringify(a)}\n`)
    this.waiters = this.waiters.filter((w) => {
      if (this.acks.length < w.n) return true
      w.resolve()
      return false
    })
  }

  /** What was answered from `since` on (requests in flight then included): counts per status, and the longest request. */
  summary(since = 0) {
    const picked = this.outcomes.filter(o => o.startedAt + o.ms >= since)
    const byStatus: Record<string, number> = {}
    for (const o of picked) byStatus[String(o.status)] = (byStatus[String(o.status)] ?? 0) + 1
    return { byStatus, maxMs: Math.max(0, ...picked.map(o => o.ms)), requests: picked.length }
  }
}

/** The acknowledged writes missing from one node (by id and job reference). */
export function missingOn(node: GaleraNode, acks: Ack[]): Ack[] {
  if (!acks.length) return []
  const present = new Map(onNode(node, `SELECT id, job_ref FROM repair_records WHERE id IN (${acks.map(a => a.id).join(',')})`).map(([id, ref]) => [Number(id), ref]))
  return acks.filter(a => present.get(a.id) !== a.jobRef)
}
