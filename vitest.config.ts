import { fileURLToPath } from 'node:url'
import { defineConfig } from 'vitest/config'

const alias = {
  '#shared': fileURLToPath(new URL('./shared', import.meta.url)),
  '~~': fileURLToPath(new URL('.', import.meta.url)),
}

/**
 * Two projects: `unit` (pure modules: the engine, shared helpers, parsers) runs in parallel;
 * `api` talks to the running server and the real PostgreSQL (scripts/test.sh starts both)
 * and runs one file at a time because its files share one database.
 */
export default defineConfig({
  resolve: { alias },
  test: {
    allowOnly: !process.env.CI,
    projects: [
      {
        resolve: { alias },
        test: { name: 'unit', include: ['tests/**/*.test.ts'], exclude: ['tests/api/**'], environment: 'node' },
      },
      {
        resolve: { alias },
        test: {
          name: 'api',
          include: ['tests/api/**/*.test.ts'],
          environment: 'node',
          fileParallelism: false,
          testTimeout: 30_000,
          hookTimeout: 60_000,
        },
      },
    ],
  },
})
