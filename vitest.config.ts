// Test projects: pure engine/shared units, API tests on real PostgreSQL, client components, browser flows.
import { defineConfig, mergeConfig } from 'vitest/config'
import viteConfig from './vite.config.ts'

export default defineConfig({
  test: {
    projects: [
      {
        test: { name: 'unit', include: ['tests/scheduler/**/*.test.ts', 'tests/shared/**/*.test.ts'], environment: 'node', testTimeout: 60_000 },
      },
      {
        test: {
          name: 'server',
          include: ['tests/server/**/*.test.ts'],
          environment: 'node',
          testTimeout: 60_000,
          hookTimeout: 60_000,
        },
      },
      mergeConfig(viteConfig, {
        test: {
          name: 'client',
          include: ['tests/client/**/*.test.ts'],
          environment: 'jsdom',
          server: { deps: { inline: ['element-plus'] } },
        },
      }),
      {
        test: {
          name: 'e2e',
          include: ['tests/e2e/**/*.test.ts'],
          environment: 'node',
          testTimeout: 120_000,
          hookTimeout: 120_000,
          fileParallelism: false,
        },
      },
    ],
  },
})
