import { defineConfig } from 'vitest/config';

// Browser tests: playwright-core drives Debian's chromium against the real server serving the real web export.
export default defineConfig({
  test: {
    include: ['tests/browser/**/*.test.ts'],
    globalSetup: ['tests/browser/global-setup.ts'],
    environment: 'node',
    testTimeout: 120_000,
    hookTimeout: 300_000,
    // One browser at a time: two cores, and each test owns its pages.
    fileParallelism: false,
    pool: 'forks',
  },
});
