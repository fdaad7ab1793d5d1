import { randomBytes } from 'node:crypto'
import { hostname } from 'node:os'
import { QueryTypes, type Sequelize } from 'sequelize'
import { isDeadlock } from './index'

/**
 * Leases held as rows of one table: a lock that holds across every server of a Galera cluster,
 * where a named lock (GET_LOCK) lives on one node only. The lease's name is the primary key, so
 * two takers collide: on one server the second INSERT fails on the duplicate key; on two nodes
 * certification lets the first commit through and fails the other (a deadlock error, or the
 * duplicate key once the server has retried the statement). An INSERT that returns has been
 * certified by the whole cluster, so the lease is held everywhere. A holder that dies leaves
 * its row behind; it expires after `ttlMs` unless renewed, which the holder does while it works.
 */
export const LEASE_TABLE = 'app_leases'

export interface LeaseOptions {
  /** How long a lease lasts without renewal; the holder renews it every quarter of that. */
  ttlMs?: number
  /** How long to wait for a lease someone else holds before giving up. */
  waitMs?: number
  /** Pause between attempts while someone else holds it. */
  pollMs?: number
}

const isDuplicate = (error: unknown) => {
  let e: unknown = error
  for (let depth = 0; e && depth < 4; depth++) {
    const err = e as { errno?: number, code?: string, name?: string, original?: unknown, parent?: unknown }
    if (err.errno === 1062 || err.code === 'ER_DUP_ENTRY' || err.name === 'SequelizeUniqueConstraintError') return true
    e = err.original ?? err.parent
  }
  return false
}

export async function ensureLeaseTable(sequelize: Sequelize): Promise<void> {
  await sequelize.query(`CREATE TABLE IF NOT EXISTS ${LEASE_TABLE} (
    name VARCHAR(64) NOT NULL PRIMARY KEY,
    holder VARCHAR(160) NOT NULL,
    expires_at DATETIME(3) NOT NULL
  ) ENGINE=InnoDB DEFAULT CHARSET=utf8mb4`, { type: QueryTypes.RAW })
}

/** Takes the lease or returns false at once; clears an expired one first. */
export async function tryTakeLease(sequelize: Sequelize, name: string, holder: string, ttlMs: number): Promise<boolean> {
  try {
    await sequelize.query(`DELETE FROM ${LEASE_TABLE} WHERE name = ? AND expires_at < UTC_TIMESTAMP(3)`, { replacements: [name], type: QueryTypes.DELETE })
    await sequelize.query(
      `INSERT INTO ${LEASE_TABLE} (name, holder, expires_at) VALUES (?, ?, UTC_TIMESTAMP(3) + INTERVAL ? MICROSECOND)`,
      { replacements: [name, holder, ttlMs * 1000], type: QueryTypes.INSERT },
    )
    return true
  }
  catch (error) {
    if (isDuplicate(error) || isDeadlock(error)) return false
    throw error
  }
}

/** Pushes the expiry on; false when the lease is no longer this holder's. */
export async function renewLease(sequelize: Sequelize, name: string, holder: string, ttlMs: number): Promise<boolean> {
  const [, affected] = await sequelize.query(
    `UPDATE ${LEASE_TABLE} SET expires_at = UTC_TIMESTAMP(3) + INTERVAL ? MICROSECOND WHERE name = ? AND holder = ?`,
    { replacements: [ttlMs * 1000, name, holder], type: QueryTypes.UPDATE },
  )
  return Number(affected) > 0
}

export async function releaseLease(sequelize: Sequelize, name: string, holder: string): Promise<void> {
  await sequelize.query(`DELETE FROM ${LEASE_TABLE} WHERE name = ? AND holder = ?`, { replacements: [name, holder], type: QueryTypes.DELETE })
}

async function currentHolder(sequelize: Sequelize, name: string) {
  const [row] = await sequelize.query<{ holder: string, expires_at: Date }>(`SELECT holder, expires_at FROM ${LEASE_TABLE} WHERE name = ?`, { replacements: [name], type: QueryTypes.SELECT })
  return row ? `${row.holder} until ${new Date(row.expires_at).toISOString()}` : 'nobody'
}

/** Runs `fn` while holding the named lease, waiting for it when another process holds it. */
export async function withLease<T>(sequelize: Sequelize, name: string, fn: () => Promise<T>, opts: LeaseOptions = {}): Promise<T> {
  const { ttlMs = 60_000, waitMs = 180_000, pollMs = 250 } = opts
  const holder = `${hostname()}:${process.pid}:${randomBytes(4).toString('hex')}`
  await ensureLeaseTable(sequelize)
  const deadline = Date.now() + waitMs
  while (!(await tryTakeLease(sequelize, name, holder, ttlMs))) {
    if (Date.now() > deadline) throw new Error(`could not take the "${name}" lease within ${Math.round(waitMs / 1000)} s (held by ${await currentHolder(sequelize, name)})`)
    await new Promise(resolve => setTimeout(resolve, pollMs * (0.5 + Math.random())))
  }
  let lost = false
  const renewal = setInterval(() => {
    renewLease(sequelize, name, holder, ttlMs).then((held) => {
      if (!held) lost = true
    }, () => { /* a missed renewal is retried at the next tick; the lease lasts ttlMs */ })
  }, Math.max(1000, ttlMs / 4))
  renewal.unref()
  try {
    const result = await fn()
    if (lost) throw new Error(`the "${name}" lease expired while held (renewals failed for longer than ${ttlMs} ms)`)
    return result
  }
  finally {
    clearInterval(renewal)
    await releaseLease(sequelize, name, holder).catch(() => { /* expires on its own */ })
  }
}
