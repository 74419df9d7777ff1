import { defineConfig } from 'vitest/config';

export default defineConfig({
  test: {
    include: ['test/**/*.test.ts'],
    // Timeouts guard against hangs, not speed: the heaviest property tests run the brute-force reference and take a minute on a busy machine.
    testTimeout: 180_000,
    hookTimeout: 60_000,
    // Daemon and browser tests start processes on free ports; two cores are enough for two at a time.
    maxWorkers: 2,
    // One temporary folder for the run, removed at its end (test/helpers/temp-root.ts).
    globalSetup: ['test/helpers/temp-root.ts'],
  },
});
