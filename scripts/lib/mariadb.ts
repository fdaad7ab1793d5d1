import { execFileSync, spawnSync } from 'node:child_process'
import { existsSync, mkdirSync } from 'node:fs'
import { join } from 'node:path'
import { fail, portOpen, readPid, startDetached, step, stopPidFile, waitFor } from './proc'

/** A private MariaDB server: data, socket and logs all under one folder of the project. */
export interface LocalMariadb {
  dir: string
  port: number
}

const MARIADBD_CANDIDATES = ['/usr/sbin/mariadbd', '/usr/bin/mariadbd', '/usr/local/bin/mariadbd']

function findBinary(name: string, candidates: string[]): string | null {
  for (const c of candidates) if (existsSync(c)) return c
  const r = spawnSync('sh', ['-c', `command -v ${name}`], { encoding: 'utf8' })
  return r.status === 0 && r.stdout.trim() ? r.stdout.trim() : null
}

export function mariadbd(): string | null {
  return findBinary('mariadbd', MARIADBD_CANDIDATES)
}

/** Installs Debian's mariadb-server when mariadbd is missing; exits with a clear message when it cannot. */
export function ensureMariadbInstalled(): void {
  if (mariadbd()) return
  const isRoot = process.getuid?.() === 0
  const hasApt = existsSync('/usr/bin/apt-get')
  if (!isRoot || !hasApt) {
    fail('MariaDB server (mariadbd) is not installed and cannot be installed here '
      + `(${!hasApt ? 'no apt-get on this machine' : 'this needs root'}). Install it with\n`
      + '    sudo apt-get install mariadb-server\n'
      + 'or point Benchlore at an existing server with NUXT_DB_HOST, NUXT_DB_PORT, NUXT_DB_NAME, NUXT_DB_USER and NUXT_DB_PASSWORD.')
  }
  step('MariaDB: installing Debian\'s mariadb-server (once, about 20 s)…')
  const env = { ...process.env, DEBIAN_FRONTEND: 'noninteractive' }
  const update = spawnSync('apt-get', ['update'], { stdio: 'inherit', env })
  const install = update.status === 0 && spawnSync('apt-get', ['install', '-y', '--no-install-recommends', 'mariadb-server'], { stdio: 'inherit', env })
  if (!install || install.status !== 0 || !mariadbd()) fail('apt-get could not install mariadb-server; see the output above')
}

const files = (db: LocalMariadb) => ({
  data: join(db.dir, 'data'),
  socket: join(db.dir, 'mysqld.sock'),
  pid: join(db.dir, 'mysqld.pid'),
  log: join(db.dir, 'error.log'),
})

function client(db: LocalMariadb, sql: string): string {
  return execFileSync('mariadb', ['--no-defaults', `--socket=${files(db).socket}`, '-uroot', '--batch', '--skip-column-names', '-e', sql], { encoding: 'utf8', stdio: ['ignore', 'pipe', 'pipe'] })
}

export async function startMariadb(db: LocalMariadb): Promise<void> {
  const f = files(db)
  mkdirSync(db.dir, { recursive: true })
  if (readPid(f.pid)) return
  if (!existsSync(join(f.data, 'mysql'))) {
    step('MariaDB: initialising a private data directory…')
    execFileSync('mariadb-install-db', ['--no-defaults', '--user=root', `--datadir=${f.data}`, '--auth-root-authentication-method=normal',
      '--skip-test-db', '--skip-name-resolve', '--innodb-log-file-size=16M'], { stdio: 'ignore' })
  }
  if (await portOpen(db.port)) fail(`port ${db.port} is already in use; set a different port (BENCHLORE_DB_PORT) or stop what uses it`)
  startDetached(mariadbd()!, ['--no-defaults', '--user=root', `--datadir=${f.data}`, `--socket=${f.socket}`, `--pid-file=${f.pid}`,
    `--port=${db.port}`, '--bind-address=127.0.0.1', '--skip-name-resolve', `--log-error=${f.log}`,
    '--innodb-log-file-size=16M', '--innodb-buffer-pool-size=128M', '--character-set-server=utf8mb4',
    '--collation-server=utf8mb4_unicode_ci', '--max-connections=300', '--innodb-print-all-deadlocks=ON'], { logFile: join(db.dir, 'stdout.log') })
  await waitFor('MariaDB', async () => {
    client(db, 'SELECT 1')
    return true
  }, 60_000)
}

/** Creates the database and the application user (idempotent). The password is the caller's. */
export function ensureDatabase(db: LocalMariadb, name: string, user: string, password: string): void {
  const esc = (s: string) => s.replace(/\\/g, '\\\\').replace(/'/g, '\\\'')
  client(db, [
    `CREATE DATABASE IF NOT EXISTS \`${name}\` CHARACTER SET utf8mb4 COLLATE utf8mb4_unicode_ci;`,
    `CREATE USER IF NOT EXISTS '${esc(user)}'@'127.0.0.1' IDENTIFIED BY '${esc(password)}';`,
    `ALTER USER '${esc(user)}'@'127.0.0.1' IDENTIFIED BY '${esc(password)}';`,
    `GRANT ALL PRIVILEGES ON \`${name}\`.* TO '${esc(user)}'@'127.0.0.1';`,
    'FLUSH PRIVILEGES;',
  ].join(' '))
}

/** Drops and recreates a database: for throw-away test databases only. */
export function recreateDatabase(db: LocalMariadb, name: string): void {
  client(db, `DROP DATABASE IF EXISTS \`${name}\`; CREATE DATABASE \`${name}\` CHARACTER SET utf8mb4 COLLATE utf8mb4_unicode_ci;`)
}

/** A clean shutdown: SIGTERM lets InnoDB flush; wait for the pid to go away. */
export async function stopMariadb(db: LocalMariadb): Promise<void> {
  await stopPidFile(files(db).pid, 60_000)
}

export function mariadbPidFile(db: LocalMariadb): string {
  return files(db).pid
}
