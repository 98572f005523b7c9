import { defineConfig } from 'vitest/config';

export default defineConfig({
  test: {
    include: ['test/**/*.test.ts'],
    exclude: ['test/bench/**', 'node_modules/**'],
    reporters: ['default', './test/helpers/count-reporter.ts'],
    testTimeout: 30_000,
    hookTimeout: 60_000,
    // Integration tests spawn brokers and daemons; two cores are all we have.
    fileParallelism: true,
    maxWorkers: 2,
  },
});
