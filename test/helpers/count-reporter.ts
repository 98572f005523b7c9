import type { Reporter, TestModule } from 'vitest/node';

/**
 * Ends every run with one plain line `N passed, N failed[, N skipped]` that CI counts.
 * A file that fails to load and any unhandled error count as failures, so a broken
 * suite can never look green.
 */
export default class CountReporter implements Reporter {
  onTestRunEnd(
    testModules: ReadonlyArray<TestModule>,
    unhandledErrors: ReadonlyArray<unknown>,
  ): void {
    let passed = 0;
    let failed = 0;
    let skipped = 0;
    for (const mod of testModules) {
      let testsInModule = 0;
      for (const test of mod.children.allTests()) {
        testsInModule += 1;
        const state = test.result().state;
        if (state === 'passed') passed += 1;
        else if (state === 'failed') failed += 1;
        else skipped += 1;
      }
      // A module that failed to collect (syntax error, throwing import) has no tests but is a failure.
      if (mod.state() === 'failed' && testsInModule === 0) failed += 1;
      else if (mod.errors().length > 0 && !mod.ok()) failed += mod.errors().length;
    }
    failed += unhandledErrors.length;
    const tail = skipped > 0 ? `, ${skipped} skipped` : '';
    process.stdout.write(`\n${passed} passed, ${failed} failed${tail}\n`);
  }
}
