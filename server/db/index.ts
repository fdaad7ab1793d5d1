import * as mariadb from 'mariadb'
import { Sequelize, type Model, type ModelStatic, type Transaction, type TransactionOptions } from 'sequelize'
import { unavailable } from '../services/errors'
import { failoverDriver, parseDbHosts } from './cluster'
import { initModels } from './models'

export interface DbConfig {
  host: string
  port: number
  name: string
  user: string
  password: string
  /** Several servers of one cluster, `host:port,…` in order of preference (NUXT_DB_HOSTS); replaces host and port. */
  hosts?: string
  /** wsrep_sync_wait for every session (NUXT_DB_SYNC_WAIT): 1 makes reads wait for writes other Galera nodes committed. */
  syncWait?: number
}

let sequelize: Sequelize | undefined

/** Reads the database settings from the NUXT_DB_* variables (scripts and tests; the app uses runtimeConfig). */
export function dbConfigFromEnv(env: NodeJS.ProcessEnv = process.env): DbConfig {
  return {
    host: env.NUXT_DB_HOST ?? '127.0.0.1',
    port: Number(env.NUXT_DB_PORT ?? 3307),
    name: env.NUXT_DB_NAME ?? 'benchlore',
    user: env.NUXT_DB_USER ?? 'benchlore',
    password: env.NUXT_DB_PASSWORD ?? '',
    hosts: env.NUXT_DB_HOSTS ?? '',
    syncWait: Number(env.NUXT_DB_SYNC_WAIT ?? 0),
  }
}

export function createSequelize(cfg: DbConfig): Sequelize {
  const nodes = cfg.hosts ? parseDbHosts(cfg.hosts, Number(cfg.port)) : []
  const syncWait = Number(cfg.syncWait) || 0
  return new Sequelize(cfg.name, cfg.user, cfg.password, {
    host: nodes[0]?.host ?? cfg.host,
    port: nodes[0]?.port ?? Number(cfg.port),
    dialect: 'mariadb',
    // Passed explicitly: the bundled server lacks the CJS entry Sequelize would require().
    // With several nodes, each new connection goes to the first one that is up and in step.
    dialectModule: nodes.length ? failoverDriver(nodes) : mariadb,
    logging: false,
    timezone: '+00:00',
    dialectOptions: {
      timezone: '+00:00',
      connectTimeout: 2000,
      // COUNT(*) and BIGINT ids as numbers, so JSON never meets a BigInt.
      bigIntAsNumber: true,
      insertIdAsNumber: true,
      decimalAsNumber: true,
      ...(syncWait ? { initSql: `SET SESSION wsrep_sync_wait = ${syncWait}` } : {}),
    },
    // Fail fast while the database is away (the API answers 503) and recover on its own.
    // Enough connections for bursts of transactions that wait on one row lock (concurrent
    // submits); an unreachable server still fails at once through connectTimeout.
    pool: { max: 25, min: 0, acquire: 15_000, idle: 10_000, evict: 5_000 },
    retry: { max: 0 },
    define: { underscored: true },
  })
}

/** Opens the one Sequelize instance of this process and binds the models to it. */
export function initDatabase(cfg: DbConfig): Sequelize {
  if (sequelize) return sequelize
  sequelize = createSequelize(cfg)
  initModels(sequelize)
  return sequelize
}

export function useDb(): Sequelize {
  if (!sequelize) throw new Error('database not initialised: call initDatabase() first')
  return sequelize
}

/**
 * One part of a revision's JSON `content`, computed by MariaDB, so a query reads only what it
 * needs of whole procedures: JSON_VALUE for a scalar ('$.title'), JSON_EXTRACT for an array or
 * object ('$.symptoms'). Paths go in as a literal: Sequelize would turn a `$` in a string
 * argument into `$$` (bind syntax) and the path would match nothing.
 */
export function contentPart(fn: 'JSON_VALUE' | 'JSON_EXTRACT', path: `$.${string}`) {
  const db = useDb()
  return db.fn(fn, db.col('content'), db.literal(`'${path}'`))
}

/** A JSON_EXTRACT part as the mariadb driver hands it back (text), or already parsed. */
export function jsonArray<T>(value: unknown): T[] {
  return Array.isArray(value) ? value : typeof value === 'string' ? JSON.parse(value) as T[] : []
}

/** InnoDB's answer when it chose this transaction as the victim of a deadlock (ER_LOCK_DEADLOCK). */
export function isDeadlock(error: unknown): boolean {
  let e: unknown = error
  for (let depth = 0; e && depth < 4; depth++) {
    const err = e as { errno?: number, code?: string, original?: unknown, parent?: unknown, cause?: unknown }
    if (err.errno === 1213 || err.code === 'ER_LOCK_DEADLOCK') return true
    e = err.original ?? err.parent ?? err.cause
  }
  return false
}

/**
 * A managed transaction, re-run from the start when InnoDB rolls it back to break a deadlock
 * (the remedy the MySQL/MariaDB manuals give: be ready to re-issue a transaction that fails on
 * a deadlock). On a Galera cluster a transaction that lost a certification conflict with a
 * commit on another node fails the same way, and is re-run the same way. The callback must
 * touch only the database: it may run up to `attempts` times. Other errors go to the caller
 * as they are; a deadlock on the last attempt goes as "unavailable" (a 503 to try again), with
 * the deadlock attached.
 */
export async function inTransaction<T>(fn: (transaction: Transaction) => Promise<T>, options: TransactionOptions & { attempts?: number } = {}): Promise<T> {
  const { attempts = 4, ...txOptions } = options
  for (let attempt = 1; ; attempt++) {
    try {
      return await useDb().transaction(txOptions, fn)
    }
    catch (error) {
      if (!isDeadlock(error)) throw error
      // Kept as `original` (where isDeadlock looks), not `cause`: h3 would wrap the cause instead of the domain error.
      if (attempt >= attempts) throw Object.assign(unavailable('The database is busy with conflicting changes; try again in a moment.'), { original: error })
      // A random pause, growing with each attempt (about 40, 160, 640 ms), so the transactions
      // that collided do not collide again in step, and a cluster busy replacing a lost node
      // has a moment to settle.
      await new Promise(resolve => setTimeout(resolve, 10 * 4 ** attempt * (0.5 + Math.random())))
    }
  }
}

type HookOptions = { transaction?: Transaction | null } | undefined
const INSTANCE_HOOKS = ['afterCreate', 'afterUpdate', 'afterDestroy', 'afterUpsert'] as const
const BULK_HOOKS = ['afterBulkCreate', 'afterBulkUpdate', 'afterBulkDestroy'] as const

/**
 * Calls `listener` whenever a row of one of these models is created, changed or deleted through
 * Sequelize in this process: after the transaction commits (so a reader refilling a cache sees
 * the new value), or at once outside a transaction. Raw SQL does not pass through model hooks.
 */
export function afterModelChange(models: Array<ModelStatic<Model>>, listener: () => void): void {
  const fire = (options: HookOptions) => {
    if (options?.transaction) options.transaction.afterCommit(() => listener())
    else listener()
  }
  for (const model of models) {
    for (const hook of INSTANCE_HOOKS) model.addHook(hook, (_row: unknown, options: HookOptions) => fire(options))
    // Bulk hooks: afterBulkCreate gets (rows, options), the others (options).
    for (const hook of BULK_HOOKS) model.addHook(hook, (a: unknown, b?: HookOptions) => fire(hook === 'afterBulkCreate' ? b : a as HookOptions))
  }
}

export async function closeDatabase(): Promise<void> {
  await sequelize?.close()
  sequelize = undefined
}

export * from './models'
