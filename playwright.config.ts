import { defineConfig } from '@playwright/test';

// End-to-end tests of browser mode: test/e2e/global-setup.ts starts the real `zoneplan serve`
// on a fresh demo project in a temporary folder; the specs drive Debian's Chromium (Playwright's
// own browser download cannot work offline, see ../shared/STACK.md section 8). The specs share
// one server and project, so they run one at a time in file order.
export const CHROMIUM_ARGS = ['--no-sandbox', '--disable-gpu', '--disable-quic', '--no-first-run', '--disable-background-networking', '--disable-component-update', '--disable-sync'];

export default defineConfig({
  testDir: 'test/e2e',
  testMatch: '*.spec.ts',
  globalSetup: './test/e2e/global-setup.ts',
  timeout: 60_000,
  expect: { timeout: 15_000 },
  fullyParallel: false,
  workers: 1,
  retries: 0,
  outputDir: 'test-results/e2e-artifacts',
  // The JSON report always goes to test-results/e2e.json (.ci/run adds its totals to vitest's).
  reporter: [['list'], ['json', { outputFile: 'test-results/e2e.json' }]],
  use: {
    browserName: 'chromium',
    viewport: { width: 1280, height: 800 },
    acceptDownloads: true,
    launchOptions: { executablePath: '/usr/bin/chromium', args: CHROMIUM_ARGS },
    actionTimeout: 10_000,
    trace: 'off',
    screenshot: 'only-on-failure',
  },
});
