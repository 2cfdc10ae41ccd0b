import { defineConfig } from 'vitest/config';

export default defineConfig({
  test: {
    include: ['test/**/*.test.ts'],
    // Database suites share one PostgreSQL server; each file uses its own schema, so files may run in parallel.
    testTimeout: 30_000,
    hookTimeout: 60_000,
    pool: 'forks',
    reporters: ['default', './test/support/summary-reporter.ts'],
  },
});
