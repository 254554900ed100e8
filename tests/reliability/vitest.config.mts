import { defineConfig } from 'vitest/config';

// Fault-injection and fuzz suite. RELIABILITY=full (npm run test:reliability) tries more; short runs inside npm test.
export default defineConfig({
  test: {
    include: ['tests/reliability/**/*.test.ts'],
    environment: 'node',
    testTimeout: 900_000,
    hookTimeout: 300_000,
    fileParallelism: false,
    pool: 'forks',
  },
});
