import { defineConfig } from 'vitest/config'

// `npm run test:cluster` (scripts/test-cluster.sh): one file at a time, since each kills and
// restarts nodes of the one cluster; never part of `npm test`.
export default defineConfig({
  test: {
    name: 'cluster',
    environment: 'node',
    include: ['tests/cluster/**/*.test.ts'],
    fileParallelism: false,
    testTimeout: 180_000,
    hookTimeout: 180_000,
  },
})
