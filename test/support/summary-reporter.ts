/**
 * Prints one plain closing line, "Tests: N passed, N failed, N skipped", after vitest's own
 * report, so any tool that reads test output (CI included) can count the run; and before it,
 * one loud line for each suite this machine could not run (no PostgreSQL, no Chromium), with
 * what to set or install, so a skip is never silent.
 */
import fs from 'node:fs';
import type { Reporter, TestModule } from 'vitest/node';

/** The suites skipped for want of a server or a browser, each with what would run them. */
function environmentSkips(): string[] {
  const skips: string[] = [];
  if (!/^postgres(ql)?:\/\//.test(process.env['DATABASE_URL'] ?? '')) {
    skips.push('!!! NO POSTGRESQL: the PostgreSQL suites are skipped on this machine; set DATABASE_URL=postgres://user@host:5432/database to run them (REQUIRE_POSTGRES=1 makes a skip an error) !!!');
  }
  const chromium = process.env['CHROMIUM_PATH'] ?? '/usr/bin/chromium';
  let browser = false;
  try {
    fs.accessSync(chromium, fs.constants.X_OK);
    browser = fs.statSync(chromium).isFile();
  } catch {
    browser = false;
  }
  if (!browser) {
    skips.push(`!!! NO CHROMIUM: the browser tests are skipped on this machine, there is none at ${chromium}; install it with \`apt-get install chromium\` or set CHROMIUM_PATH (REQUIRE_BROWSER=1 makes a skip an error) !!!`);
  }
  return skips;
}

export default class SummaryReporter implements Reporter {
  onTestRunEnd(testModules: ReadonlyArray<TestModule>): void {
    let passed = 0;
    let failed = 0;
    let skipped = 0;
    for (const testModule of testModules) {
      for (const testCase of testModule.children.allTests()) {
        const state = testCase.result().state;
        if (state === 'passed') passed += 1;
        else if (state === 'failed') failed += 1;
        else skipped += 1;
      }
      if (testModule.state() === 'failed' && [...testModule.children.allTests()].length === 0) failed += 1; // a file that failed to load
    }
    const skips = environmentSkips();
    process.stdout.write(`${skips.length > 0 ? `\n${skips.join('\n')}` : ''}\nTests: ${passed} passed, ${failed} failed, ${skipped} skipped\n`);
  }
}
