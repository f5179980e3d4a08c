import { defineConfig } from 'vitest/config';

// ZONEPLAN_TEST_REPORT=path also writes vitest's JSON report there (CI reads its totals).
const report = process.env['ZONEPLAN_TEST_REPORT'];

export default defineConfig({
  test: {
    include: ['test/**/*.test.ts'],
    exclude: ['test/e2e/**', 'node_modules/**'],
    environment: 'node',
    testTimeout: 60_000,
    hookTimeout: 60_000,
    reporters: report ? ['default', ['json', { outputFile: report }]] : ['default'],
  },
});
