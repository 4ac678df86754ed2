import { defineConfig } from 'vitest/config';

export default defineConfig({
  test: {
    include: ['test/**/*.test.ts'],
    // Generous: the suite runs on two shared cores in CI; a slow test is a finding for bench/, not a failure here.
    testTimeout: 180_000,
  },
});
