/**
 * Prints one plain closing line, "Tests: N passed, N failed, N skipped", after vitest's own
 * report, so any tool that reads test output (CI included) can count the run.
 */
import type { Reporter, TestModule } from 'vitest/node';

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
    process.stdout.write(`\nTests: ${passed} passed, ${failed} failed, ${skipped} skipped\n`);
  }
}
