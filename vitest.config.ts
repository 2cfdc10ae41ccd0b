import { defineConfig } from 'vitest/config';

// Suites that need neither a database nor the service: statistics, the pure report builder and
// its wording, upload parsing and field readers, and the page rendered from a snapshot.
const UNIT = [
  'test/stats/**/*.test.ts',
  'test/ingest/{body-spool,fields,header-check,parse,text-decoding,upload-settings}.test.ts',
  'test/report/{build-digests,calibration,compute,csv,definition,format,segment-table,uplift-analysis,value-logs,verdict,withholding,wording-grammar}.test.ts',
  'test/segments/{dimensions,rollup}.test.ts',
  'test/view/{charts,html,interval-chart,page,scale,svg-safety,text-width}.test.ts',
  'test/calibration/**/*.test.ts',
];
const ROBUSTNESS = ['test/robustness/**/*.test.ts'];
const BROWSER = ['test/browser/**/*.test.ts'];

export default defineConfig({
  test: {
    // Database suites share one PostgreSQL server; each file uses its own schema, so files may run in parallel.
    testTimeout: 30_000,
    hookTimeout: 60_000,
    pool: 'forks',
    reporters: ['default', './test/support/summary-reporter.ts'],
    projects: [
      // TEST_PROJECT=unit makes opening a test database an error (test/support/database.ts).
      { extends: true, test: { name: 'unit', include: UNIT, env: { TEST_PROJECT: 'unit' } } },
      // Everything else runs against the app and a database, so no suite is left out of a run.
      { extends: true, test: { name: 'integration', include: ['test/**/*.test.ts'], exclude: [...UNIT, ...ROBUSTNESS, ...BROWSER] } },
      { extends: true, test: { name: 'robustness', include: ROBUSTNESS } },
      { extends: true, test: { name: 'browser', include: BROWSER } },
    ],
  },
});
