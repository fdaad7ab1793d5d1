// `npm run cluster -- up | down | status [--json]`: Benchlore as it runs on several machines,
// here on loopback: a Galera cluster of MariaDB nodes, several app instances built from this
// checkout, nginx in front of them, the object store and the mail catcher shared. Data and pid
// files under .data-cluster/local/; ports in scripts/lib/cluster.ts.
import { nodeStatus } from './lib/galera'
import { clusterDown, clusterProfile, clusterStatus, clusterUp, proxyUrl } from './lib/cluster'
import { done, fail, step } from './lib/proc'

const [command, ...flags] = process.argv.slice(2)
const profile = clusterProfile('local')

async function up() {
  try {
    await clusterUp(profile)
  }
  catch (error) {
    console.error(`✗ ${(error as Error).message}`)
    step('stopping what was started…')
    await clusterDown(profile)
    fail('the cluster did not come up')
  }
  const s = clusterStatus(profile)
  console.log(`
Benchlore cluster at ${proxyUrl(profile)}   (nginx, round robin)
  app instances   ${s.apps.map(a => `${a.url} (pid ${a.pid})`).join(', ')}
  database nodes  ${s.db.map(d => `127.0.0.1:${d.port} (pid ${d.pid})`).join(', ')}
  object store    http://127.0.0.1:${profile.s3Port}   mail catcher 127.0.0.1:${profile.smtpPort}

Demo accounts as with npm start (password bench-demo-2026). Stop everything with: npm run cluster -- down`)
}

async function status(json: boolean) {
  const s = clusterStatus(profile)
  if (json) {
    console.log(JSON.stringify(s, null, 2))
    return
  }
  console.log(`proxy ${s.proxy}`)
  for (const a of s.apps) console.log(`  app  ${a.url}  ${a.pid ? `pid ${a.pid}` : 'stopped'}`)
  profile.db.nodes.forEach((n, i) => {
    const pid = s.db[i]!.pid
    const st = pid ? nodeStatus(n) : null
    console.log(`  db   ${n.name} 127.0.0.1:${n.port}  ${pid ? `pid ${pid}, ${st ? `${st.state}, cluster of ${st.clusterSize} (${st.clusterStatus})` : 'not answering'}` : 'stopped'}`)
  })
}

switch (command) {
  case 'up':
    await up()
    break
  case 'down':
    await clusterDown(profile)
    done('cluster stopped (everything its pid files named)')
    break
  case 'status':
    await status(flags.includes('--json'))
    break
  default:
    console.error('usage: npm run cluster -- up | down | status [--json]')
    process.exit(2)
}
