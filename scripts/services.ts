// Starts or stops only the backing services (MariaDB, object store, mail catcher) of a stack,
// for working with `nuxt dev` or running one test file: tsx scripts/services.ts up|down|env [start|test]
import { DB_NAME, stackEnv, startDatabase, startMailCatcher, startObjectStore, startProfile, stopDatabase, stopMailCatcher, stopObjectStore, testProfile } from './lib/stack'

const [action = 'up', which = 'start'] = process.argv.slice(2)
const profile = which === 'test' ? testProfile() : startProfile()
if (action === 'up') {
  await Promise.all([startDatabase(profile), startObjectStore(profile), startMailCatcher(profile)])
  console.log(`services of the "${profile.name}" stack are up (database ${DB_NAME}); \`tsx scripts/services.ts env ${which}\` prints their settings`)
}
else if (action === 'down') {
  await Promise.all([stopMailCatcher(profile), stopObjectStore(profile)])
  await stopDatabase(profile)
}
else if (action === 'env') {
  const env = stackEnv(profile)
  for (const [k, v] of Object.entries(env)) if (k.startsWith('NUXT_') || k.startsWith('NITRO_')) console.log(`export ${k}=${JSON.stringify(v)}`)
}
else {
  console.error('usage: tsx scripts/services.ts up|down|env [start|test]')
  process.exit(2)
}
