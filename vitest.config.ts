import { defineConfig } from 'vitest/config';

export default defineConfig({
  test: {
    include: ['test/**/*.test.ts'],
    testTimeout: 60_000,
    hookTimeout: 60_000,
    // Daemon and browser tests start processes on free ports; two cores are enough for two at a time.
    maxWorkers: 2,
  },
});
