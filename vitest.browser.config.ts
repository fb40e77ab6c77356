import { defineConfig } from 'vitest/config';

/** Browser tests: the real server + the web export, driven through Debian Chromium (playwright-core). */
export default defineConfig({
  test: {
    include: ['tests/browser/**/*.test.ts'],
    environment: 'node',
    globalSetup: ['tests/browser/global-setup.ts'],
    pool: 'forks',
    maxWorkers: 1,
    fileParallelism: false,
    testTimeout: 120_000,
    hookTimeout: 180_000,
    teardownTimeout: 30_000,
  },
});
