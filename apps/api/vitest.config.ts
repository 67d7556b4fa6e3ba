import { defineConfig } from 'vitest/config';

export default defineConfig({
  test: {
    include: ['src/**/*.test.ts'],
    globalSetup: ['src/test/global-setup.ts'],
    testTimeout: 60_000,
    hookTimeout: 60_000,
    // Each file gets its own cloned database; two workers suit this two-core machine.
    maxWorkers: 2,
  },
});
