import { defineConfig } from 'vitest/config';

export default defineConfig({
  test: {
    include: ['test/**/*.test.ts', 'test/**/*.test.tsx'],
    testTimeout: 60_000,
    hookTimeout: 180_000,
    pool: 'forks',
    // Fast default profile: Monte Carlo tests read FT_PROFILE (default 'fast'); the benchmark runs heavier cases.
    env: { FT_PROFILE: process.env.FT_PROFILE ?? 'fast' },
  },
});
