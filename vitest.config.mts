import { defineConfig } from 'vitest/config';

// Unit tests live beside the code (shared/, server/, src/ pure logic); browser tests live in tests/ and run separately.
export default defineConfig({
  test: {
    include: ['shared/**/*.test.ts', 'server/**/*.test.ts', 'src/**/*.test.ts', 'db/**/*.test.ts'],
    environment: 'node',
    testTimeout: 30_000,
    hookTimeout: 180_000,
    pool: 'forks',
  },
});
