import { fileURLToPath } from 'node:url'
import { defineVitestProject } from '@nuxt/test-utils/config'
import { defineConfig } from 'vitest/config'

const alias = {
  '#shared': fileURLToPath(new URL('./shared', import.meta.url)),
  '~~': fileURLToPath(new URL('.', import.meta.url)),
}

// Five projects, run in this order (sequence.groupOrder): pure functions, components and stores
// in the Nuxt environment (happy-dom, no server), HTTP against the running app + MariaDB, the
// browser, and last the random-input fuzzing of every route (last because what random requests
// happen to change must not surprise the other tests).
// `npm test` (scripts/test.ts) provisions the services before vitest starts.
export default defineConfig({
  resolve: { alias },
  test: {
    // One file at a time: API and browser tests share one app and one database, and some of
    // them stop services or change the demo accounts on purpose.
    fileParallelism: false,
    maxWorkers: 1,
    projects: [
      {
        resolve: { alias },
        test: { name: 'unit', include: ['tests/unit/**/*.test.ts'], environment: 'node', sequence: { groupOrder: 0 } },
      },
      await defineVitestProject({
        test: {
          name: 'nuxt',
          include: ['tests/nuxt/**/*.nuxt.test.ts', 'app/**/*.nuxt.test.ts'],
          environment: 'nuxt',
          environmentOptions: { nuxt: { domEnvironment: 'happy-dom' } },
          sequence: { groupOrder: 1 },
        },
      }),
      {
        resolve: { alias },
        test: {
          name: 'api',
          include: ['tests/api/**/*.test.ts'],
          environment: 'node',
          sequence: { groupOrder: 2 },
          testTimeout: 30_000,
          hookTimeout: 60_000,
          fileParallelism: false,
        },
      },
      {
        resolve: { alias },
        test: {
          name: 'e2e',
          include: ['tests/e2e/**/*.test.ts'],
          environment: 'node',
          sequence: { groupOrder: 3 },
          testTimeout: 90_000,
          hookTimeout: 90_000,
          fileParallelism: false,
        },
      },
      {
        resolve: { alias },
        test: {
          name: 'fuzz',
          include: ['tests/fuzz/**/*.test.ts'],
          environment: 'node',
          sequence: { groupOrder: 4 },
          testTimeout: 300_000,
          hookTimeout: 60_000,
          fileParallelism: false,
        },
      },
    ],
  },
})
