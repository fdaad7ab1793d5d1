import { rmSync } from 'node:fs'
import { closeDatabase, dbConfigFromEnv, initDatabase } from '../../server/db'
import { migrateUp } from '../../server/db/migrate'
import { benchProfile, stackEnv, startDatabase, startObjectStore, stopDatabase, stopObjectStore } from './stack'

/**
 * A fresh MariaDB (and object store) for a benchmark, on its own ports and data folder; the
 * returned stop() shuts both down. The process env is pointed at it.
 */
export async function openBenchDatabase() {
  for (const k of Object.keys(process.env)) if (/^NUXT_(DB|S3|SMTP|MAIL)_/.test(k)) delete process.env[k]
  const profile = benchProfile()
  await stopDatabase(profile)
  await stopObjectStore(profile)
  rmSync(profile.dataDir, { recursive: true, force: true })
  await Promise.all([startDatabase(profile, { fresh: true }), startObjectStore(profile)])
  Object.assign(process.env, stackEnv(profile))
  const sequelize = initDatabase(dbConfigFromEnv())
  await migrateUp(sequelize)
  return {
    sequelize,
    stop: async () => {
      await closeDatabase()
      await stopObjectStore(profile)
      await stopDatabase(profile)
    },
  }
}

export function percentile(sorted: number[], p: number): number {
  if (!sorted.length) return Number.NaN
  const i = Math.min(sorted.length - 1, Math.max(0, Math.ceil((p / 100) * sorted.length) - 1))
  return sorted[i]!
}

export function timings(samples: number[]) {
  const s = [...samples].sort((a, b) => a - b)
  return { p50: percentile(s, 50), p95: percentile(s, 95), max: s[s.length - 1]!, n: s.length }
}
