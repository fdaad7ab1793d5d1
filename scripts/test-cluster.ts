// `npm run test:cluster`: a cluster of its own (scripts/lib/cluster.ts, kind "test": data under
// .data-cluster/test/, wiped at each run), then the tests in tests/cluster/ against it, then
// everything stopped. Exit code = result. CI runs it after `npm test` (.ci/run).
import { existsSync, mkdirSync, readFileSync } from 'node:fs'
import { join } from 'node:path'
import { done, runVitest, step } from './lib/proc'
import { FAST_MAIL_ENV, asStack, clusterDown, clusterEnv, clusterProfile, clusterUp, clusterWipe, proxyUrl } from './lib/cluster'
import { ROOT, appFiles } from './lib/stack'

const startedAt = Date.now()
const profile = clusterProfile('test')

/** After a failed run, the app instances' unhandled errors: CI keeps the console, not .data-cluster/. */
function printServerErrors() {
  for (const [i] of profile.appPorts.entries()) {
    const file = appFiles(asStack(profile), `app-${i + 1}`).log
    if (!existsSync(file)) continue
    const lines = readFileSync(file, 'utf8').split('\n')
    const hits = lines.flatMap((line, n) => line.includes('[benchlore] unhandled error') ? [lines.slice(n, n + 12).join('\n')] : [])
    for (const h of hits.slice(-4)) console.error(`app-${i + 1}.log:\n${h}\n`)
  }
}

let code = 1
const stop = (signalCode: number) => void clusterDown(profile).then(() => process.exit(signalCode))
process.on('SIGINT', () => stop(130))
process.on('SIGTERM', () => stop(143))
try {
  await clusterWipe(profile)
  await clusterUp(profile, { fresh: true, appEnv: FAST_MAIL_ENV })
  const tmp = join(profile.dataDir, 'tmp')
  mkdirSync(tmp, { recursive: true })
  const env = {
    ...clusterEnv(profile, 0, FAST_MAIL_ENV),
    TMPDIR: tmp,
    BENCHLORE_TEST: '1',
    BENCHLORE_BASE_URL: proxyUrl(profile),
  }
  step('cluster tests…')
  code = await runVitest(ROOT, ['run', '--config', 'vitest.cluster.config.ts', ...process.argv.slice(2)], env)
  if (code !== 0) printServerErrors()
}
catch (error) {
  console.error(`✗ ${(error as Error).message}`)
  code = 1
}
finally {
  step('stopping the test cluster…')
  await clusterDown(profile)
  done(`cluster test run finished in ${((Date.now() - startedAt) / 1000).toFixed(0)} s, exit code ${code}`)
}
process.exit(code)
