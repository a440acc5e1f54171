import { defineConfig } from '@playwright/test'

/**
 * User-flow tests in Debian's Chromium against the built server that scripts/test.sh starts
 * (COUNTERPART_TEST_URL). Screenshots of every test end up in test-results/.
 */
export default defineConfig({
  testDir: './e2e',
  outputDir: './test-results/e2e',
  forbidOnly: !!process.env.CI,
  workers: 1,
  retries: 0,
  timeout: 60_000,
  expect: { timeout: 10_000 },
  use: {
    baseURL: process.env.COUNTERPART_TEST_URL ?? 'http://127.0.0.1:3100',
    testIdAttribute: 'data-test',
    screenshot: 'on',
    trace: 'retain-on-failure',
    launchOptions: {
      executablePath: '/usr/bin/chromium',
      args: ['--headless', '--no-sandbox', '--disable-gpu', '--disable-quic', '--no-first-run',
        '--disable-background-networking', '--disable-component-update', '--disable-sync'],
    },
  },
})
