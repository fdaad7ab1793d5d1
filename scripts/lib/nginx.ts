import { execFileSync } from 'node:child_process'
import { existsSync, mkdirSync, readdirSync, readFileSync, writeFileSync } from 'node:fs'
import { join } from 'node:path'
import { ensureDebianPackages, hasFile } from './debian'
import { portOpen, readPid, startDetached, stopPidFile, waitFor } from './proc'

const NGINX = ['/usr/sbin/nginx', '/usr/bin/nginx']
const nginxBinary = () => NGINX.find(p => existsSync(p)) ?? 'nginx'

export function ensureNginxInstalled(): void {
  ensureDebianPackages([{ name: 'nginx', present: hasFile(...NGINX), purpose: 'the load balancer in front of the app instances' }])
}

/** A private nginx: its configuration, pid, logs and buffers in one folder. */
export interface LocalProxy {
  dir: string
  port: number
  /** The app instances' ports, in round-robin order. */
  upstreams: number[]
  /** Largest request body passed on (uploads). */
  maxBodyMb: number
}

export const proxyFiles = (p: LocalProxy) => ({
  conf: join(p.dir, 'nginx.conf'),
  pid: join(p.dir, 'nginx.pid'),
  errorLog: join(p.dir, 'error.log'),
  stdout: join(p.dir, 'stdout.log'),
})

/**
 * Round robin over the instances, with passive health checks: an instance that refuses a
 * connection or times out is skipped for `fail_timeout`, and the request is passed to the next
 * one (nginx does that for any method when the request never reached the failed instance; a
 * request already sent is not repeated unless idempotent). When no instance answers, a JSON 503
 * in the app's own error shape, with Retry-After.
 */
export function proxyConfig(p: LocalProxy): string {
  const f = proxyFiles(p)
  const tmp = join(p.dir, 'tmp')
  const unavailable = JSON.stringify({ statusCode: 503, statusMessage: 'Service Unavailable', message: 'No app instance is answering right now; try again in a moment.' })
  return `# Written by scripts/lib/nginx.ts for the local cluster; regenerated at each start.
${process.getuid?.() === 0 ? 'user root;\n' : ''}worker_processes 1;
pid ${f.pid};
error_log ${f.errorLog} warn;
daemon off;

events { worker_connections 2048; }

http {
  access_log off;
  client_body_temp_path ${tmp}/body;
  proxy_temp_path ${tmp}/proxy;
  fastcgi_temp_path ${tmp}/fastcgi;
  uwsgi_temp_path ${tmp}/uwsgi;
  scgi_temp_path ${tmp}/scgi;
  client_max_body_size ${p.maxBodyMb}m;

  upstream benchlore_apps {
${p.upstreams.map(port => `    server 127.0.0.1:${port} max_fails=1 fail_timeout=5s;`).join('\n')}
    keepalive 64;
  }

  server {
    listen 127.0.0.1:${p.port};

    location / {
      proxy_pass http://benchlore_apps;
      proxy_http_version 1.1;
      proxy_set_header Connection "";
      proxy_set_header Host $http_host;
      proxy_set_header X-Forwarded-For $proxy_add_x_forwarded_for;
      proxy_set_header X-Forwarded-Proto $scheme;
      proxy_connect_timeout 2s;
      proxy_read_timeout 60s;
      proxy_next_upstream error timeout;
      proxy_next_upstream_tries 3;
      proxy_next_upstream_timeout 10s;
      error_page 502 504 = @unavailable;
    }

    location @unavailable {
      default_type application/json;
      add_header Retry-After 5 always;
      add_header Cache-Control no-store always;
      return 503 '${unavailable}';
    }
  }
}
`
}

function writeConfig(p: LocalProxy) {
  for (const sub of ['body', 'proxy', 'fastcgi', 'uwsgi', 'scgi']) mkdirSync(join(p.dir, 'tmp', sub), { recursive: true })
  writeFileSync(proxyFiles(p).conf, proxyConfig(p))
  const test = (() => {
    try {
      execFileSync(nginxBinary(), ['-t', '-q', '-p', p.dir, '-e', proxyFiles(p).errorLog, '-c', proxyFiles(p).conf], { stdio: 'pipe' })
      return null
    }
    catch (error) {
      return String((error as { stderr?: Buffer }).stderr ?? error)
    }
  })()
  if (test) throw new Error(`nginx rejected ${proxyFiles(p).conf}:\n${test}`)
}

export async function startProxy(p: LocalProxy): Promise<void> {
  ensureNginxInstalled()
  const f = proxyFiles(p)
  if (readPid(f.pid)) return
  if (await portOpen(p.port)) throw new Error(`port ${p.port} (the proxy) is already in use; choose another (BENCHLORE_CLUSTER_PORT) or stop what uses it`)
  mkdirSync(p.dir, { recursive: true })
  writeConfig(p)
  // -e: the error log before the configuration is read, which would otherwise be the system's.
  startDetached(nginxBinary(), ['-p', p.dir, '-e', f.errorLog, '-c', f.conf], { logFile: f.stdout, pidFile: f.pid })
  await waitFor('nginx', () => portOpen(p.port), 15_000)
}

/** The pids of a process's children (nginx's workers), from /proc. */
function childPids(pid: number): Set<number> {
  const children = new Set<number>()
  for (const entry of readdirSync('/proc')) {
    if (!/^\d+$/.test(entry)) continue
    try {
      // stat: "pid (comm) state ppid …"; comm may hold spaces, so read after its closing parenthesis.
      const stat = readFileSync(`/proc/${entry}/stat`, 'utf8')
      const ppid = Number(stat.slice(stat.lastIndexOf(')') + 2).split(' ')[1])
      if (ppid === pid) children.add(Number(entry))
    }
    catch { /* exited meanwhile */ }
  }
  return children
}

/**
 * Rewrites the configuration (another set of instances) and has nginx reload it: the master
 * starts workers with the new configuration and lets the old ones finish their requests.
 * Returns once only new workers are left.
 */
export async function reconfigureProxy(p: LocalProxy): Promise<void> {
  const pid = readPid(proxyFiles(p).pid)
  if (!pid) return await startProxy(p)
  writeConfig(p)
  const before = childPids(pid)
  process.kill(pid, 'SIGHUP')
  await waitFor('nginx to reload its configuration', async () => {
    const now = childPids(pid)
    return now.size > 0 && [...now].every(c => !before.has(c))
  }, 30_000, 50)
}

export async function stopProxy(p: LocalProxy): Promise<void> {
  await stopPidFile(proxyFiles(p).pid, 15_000)
}

export const proxyPid = (p: LocalProxy) => readPid(proxyFiles(p).pid)
