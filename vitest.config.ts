import { fileURLToPath } from 'node:url'
import { defineConfig } from 'vitest/config'
import { defineVitestProject } from '@nuxt/test-utils/config'

const root = fileURLToPath(new URL('.', import.meta.url))

export default defineConfig({
  test: {
    projects: [
      {
        // Framework-free domain code and server services: plain node, no Nuxt.
        resolve: { alias: { '~~': root, '#shared': `${root}shared` } },
        test: {
          name: 'unit',
          environment: 'node',
          // property and reference-parser tests read large synthetic files: give a busy machine room
          testTimeout: 30_000,
          include: ['tests/unit/**/*.test.ts'],
        },
      },
      {
        test: {
          name: 'e2e',
          environment: 'node',
          include: ['tests/e2e/**/*.test.ts', 'tests/browser/**/*.test.ts'],
          // One built server for the whole run: files share it through globalSetup.
          globalSetup: ['tests/e2e/global-setup.ts'],
          fileParallelism: false,
          testTimeout: 60_000,
          hookTimeout: 240_000,
        },
      },
    ],
  },
})
