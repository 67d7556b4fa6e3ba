import { fileURLToPath } from 'node:url';
import { defineConfig } from 'vitest/config';

// Browser tests drive one real app (started by scripts/test.sh) through Debian's chromium:
// one file at a time, with timeouts that allow for a cold browser on a small machine.
export default defineConfig({
  root: fileURLToPath(new URL('../..', import.meta.url)),
  test: {
    include: ['tests/browser/**/*.test.ts'],
    fileParallelism: false,
    testTimeout: 120_000,
    hookTimeout: 120_000,
  },
});
