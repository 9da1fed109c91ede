import { defineConfig } from 'vitest/config';

export default defineConfig({
  test: {
    include: ['test/**/*.test.ts'],
    testTimeout: 60_000,
    hookTimeout: 60_000,
    // Integration suites start their own servers; two cores, so keep the pool small.
    maxWorkers: 2,
    minWorkers: 1,
  },
});
