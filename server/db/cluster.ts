import * as mariadb from 'mariadb'

/** One server of a database cluster. */
export interface DbNode {
  host: string
  port: number
}

/**
 * Parses NUXT_DB_HOSTS: `host:port` entries separated by commas, in order of preference
 * (`db1:3306,db2:3306,db3`; an IPv6 address goes in brackets, `[fd00::1]:3306`). A missing
 * port is `defaultPort`.
 */
export function parseDbHosts(list: string, defaultPort: number): DbNode[] {
  return list.split(',').map(s => s.trim()).filter(Boolean).map((entry) => {
    const m = /^(?:\[([^\]]+)\]|([^:]+))(?::(\d{1,5}))?$/.exec(entry)
    if (!m) throw new Error(`NUXT_DB_HOSTS: "${entry}" is not host or host:port`)
    return { host: (m[1] ?? m[2])!, port: m[3] ? Number(m[3]) : defaultPort }
  })
}

const key = (n: DbNode) => `${n.host}:${n.port}`

/** How long a node that refused a connection goes to the back of the line. */
const SET_ASIDE_MS = 5_000

type NodeState = 'synced' | 'ready' | 'unready'

/**
 * What a freshly opened connection says about its server. A server without Galera (no wsrep
 * status) counts as synced. A Galera node is usable once `wsrep_ready` is ON; it is fully caught
 * up only when Synced (a donor may be frozen while it copies its data to a joiner, and a joiner
 * refuses queries until its state transfer ends). SHOW STATUS answers even on a node that
 * refuses every other statement.
 */
async function nodeState(conn: mariadb.Connection): Promise<NodeState> {
  const rows = await conn.query<Array<{ Variable_name: string, Value: string }>>('SHOW GLOBAL STATUS WHERE Variable_name IN (\'wsrep_ready\', \'wsrep_local_state_comment\')')
  const status = new Map(rows.map(r => [r.Variable_name, r.Value]))
  if (!status.has('wsrep_ready')) return 'synced'
  if (status.get('wsrep_ready') !== 'ON') return 'unready'
  return status.get('wsrep_local_state_comment') === 'Synced' ? 'synced' : 'ready'
}

async function discard(conn: mariadb.Connection | undefined) {
  if (!conn) return
  await conn.end().catch(() => conn.destroy())
}

/**
 * The mariadb driver, with each new connection opened on the first node of `nodes` that is up
 * and in step with its cluster (see nodeState); a node that is ready but still catching up is
 * used only when no node is in step. Sequelize's pool drops a connection whose server went away,
 * so after losing a node the pool refills on the others, and returns to the preferred node as
 * idle connections are evicted. Which node comes first is the caller's choice: instances that
 * list the nodes in different orders spread their writes over the cluster.
 */
export function failoverDriver(nodes: DbNode[]): typeof mariadb {
  if (!nodes.length) throw new Error('failoverDriver needs at least one database node')
  const setAsideUntil = new Map<string, number>()
  async function createConnection(config: string | mariadb.ConnectionConfig): Promise<mariadb.Connection> {
    if (typeof config === 'string') throw new Error('failoverDriver takes connection options, not a URI')
    const now = Date.now()
    const rank = (n: DbNode) => ((setAsideUntil.get(key(n)) ?? 0) > now ? 1 : 0)
    // Array.prototype.sort is stable: the preference order holds within each group.
    const order = [...nodes].sort((a, b) => rank(a) - rank(b))
    let fallback: mariadb.Connection | undefined
    let lastError: unknown
    for (const node of order) {
      let conn: mariadb.Connection | undefined
      try {
        conn = await mariadb.createConnection({ ...config, host: node.host, port: node.port })
        const state = await nodeState(conn)
        if (state === 'synced') {
          setAsideUntil.delete(key(node))
          await discard(fallback)
          return conn
        }
        if (state === 'ready' && !fallback) {
          fallback = conn
          continue
        }
        lastError = new Error(`database node ${key(node)} is not ready (joining, or cut off from its cluster)`)
      }
      catch (error) {
        lastError = error
      }
      await discard(conn)
      setAsideUntil.set(key(node), now + SET_ASIDE_MS)
    }
    if (fallback) return fallback
    throw lastError
  }
  return { ...mariadb, createConnection } as typeof mariadb
}

const TRANSIENT_CODES = /^(ER_SOCKET_UNEXPECTED_CLOSE|ER_CONNECTION_ALREADY_CLOSED|ER_GET_CONNECTION_TIMEOUT|ER_CONNECTION_TIMEOUT|ER_SOCKET_TIMEOUT|ECONNRESET|ECONNREFUSED|EPIPE|ETIMEDOUT|ER_LOCK_DEADLOCK|ER_LOCK_WAIT_TIMEOUT|ER_UNKNOWN_COM_ERROR)$/
const TRANSIENT_NAMES = /^Sequelize(Connection|ConnectionRefused|ConnectionAcquireTimeout|HostNotReachable|ConnectionTimedOut)Error$/

/**
 * An error that says nothing about the statement itself: the connection or its server went
 * away, a Galera node was not ready (1047) or lost a certification conflict (1213), a lock wait
 * timed out. The same statement may succeed on a fresh connection, possibly to another node.
 */
export function isTransientDbError(error: unknown): boolean {
  let e: unknown = error
  for (let depth = 0; e && depth < 5; depth++) {
    const err = e as { name?: string, code?: string, errno?: number, original?: unknown, parent?: unknown, cause?: unknown }
    if (TRANSIENT_NAMES.test(err.name ?? '') || TRANSIENT_CODES.test(err.code ?? '') || err.errno === 1047 || err.errno === 1213) return true
    e = err.original ?? err.parent ?? err.cause
  }
  return false
}

/**
 * Runs an idempotent write again while it fails for a transient reason, for up to about
 * `budgetMs`: long enough for a cluster to drop a dead node and for the pool to reconnect
 * elsewhere. Only for statements that do the same thing however often they run.
 */
export async function retryTransient<T>(fn: () => Promise<T>, budgetMs = 15_000): Promise<T> {
  const until = Date.now() + budgetMs
  for (let attempt = 1; ; attempt++) {
    try {
      return await fn()
    }
    catch (error) {
      if (!isTransientDbError(error) || Date.now() > until) throw error
      await new Promise(resolve => setTimeout(resolve, Math.min(2000, 100 * 2 ** attempt)))
    }
  }
}
