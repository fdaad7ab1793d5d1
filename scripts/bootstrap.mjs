// Entry point of `npm start`, `npm test`, `npm run cluster` and `npm run test:cluster`. Plain
// JavaScript on purpose: it runs before the npm dependencies (TypeScript, tsx) are installed,
// installs them when missing or stale, and then hands over to the TypeScript orchestrator in
// scripts/<command>.ts.
import { spawn, spawnSync } from 'node:child_process'
import { existsSync, statSync } from 'node:fs'
import { fileURLToPath } from 'node:url'
import { dirname, join } from 'node:path'

const root = dirname(dirname(fileURLToPath(import.meta.url)))
const command = process.argv[2]
const COMMANDS = ['start', 'test', 'cluster', 'test-cluster']
if (!COMMANDS.includes(command)) {
  console.error(`usage: node scripts/bootstrap.mjs ${COMMANDS.join('|')}`)
  process.exit(2)
}

// Progress goes to stderr when the command's own output is machine-read (`status --json`).
const jsonOut = process.argv.includes('--json')
const log = jsonOut ? console.error : console.log

const installedMarker = join(root, 'node_modules', '.package-lock.json')
const lock = join(root, 'package-lock.json')
const stale = !existsSync(installedMarker) || !existsSync(join(root, 'node_modules', '.bin', 'tsx'))
  || (existsSync(lock) && statSync(lock).mtimeMs > statSync(installedMarker).mtimeMs + 1000)
if (stale) {
  log('▸ npm dependencies: installing (npm ci)…')
  const started = Date.now()
  const r = spawnSync('npm', ['ci', '--no-audit', '--no-fund', '--prefer-offline'], { cwd: root, stdio: ['inherit', jsonOut ? process.stderr : 'inherit', 'inherit'] })
  if (r.status !== 0) {
    console.error('✗ npm ci failed; see the output above')
    process.exit(r.status ?? 1)
  }
  log(`✓ npm dependencies installed in ${((Date.now() - started) / 1000).toFixed(1)} s`)
}
else {
  log('✓ npm dependencies present')
}

const child = spawn(join(root, 'node_modules', '.bin', 'tsx'), [join(root, 'scripts', `${command}.ts`), ...process.argv.slice(3)], {
  cwd: root,
  stdio: 'inherit',
})
// The orchestrator handles SIGINT/SIGTERM itself (it shuts the services down in order);
// this wrapper only passes them on and waits.
for (const signal of ['SIGINT', 'SIGTERM']) process.on(signal, () => child.kill(signal))
child.on('exit', (code, signal) => process.exit(code ?? (signal ? 1 : 0)))
