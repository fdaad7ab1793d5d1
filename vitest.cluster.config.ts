import { defineConfig } from 'vitest/config'
import { BaseSequencer, type TestSpecification } from 'vitest/node'

/** Files by name: the correctness checks want the whole cluster, before the faults take parts of it down. */
class ByName extends BaseSequencer {
  override async sort(files: TestSpecification[]) {
    return [...files].sort((a, b) => a.moduleId.localeCompare(b.moduleId))
  }
}

// The cluster tests (`npm run test:cluster`, scripts/test-cluster.ts): one cluster, files in
// order, each waiting on database nodes that leave and rejoin.
export default defineConfig({
  test: {
    name: 'cluster',
    include: ['tests/cluster/**/*.test.ts'],
    environment: 'node',
    fileParallelism: false,
    maxWorkers: 1,
    sequence: { concurrent: false, sequencer: ByName },
    testTimeout: 240_000,
    hookTimeout: 300_000,
  },
})
