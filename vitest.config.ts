import { defineConfig } from 'vitest/config';

// Server, API and engine tests (the Angular specs under src/ run through `ng test`).
export default defineConfig({
  test: {
    include: ['tests/**/*.test.ts'],
    environment: 'node',
    pool: 'forks',
    testTimeout: 60_000,
    hookTimeout: 120_000,
    globalSetup: ['tests/global-setup.ts'],
  },
});
