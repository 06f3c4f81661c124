import { defineConfig } from 'vitest/config';

// Browser tests: tests/e2e/e2e-setup.ts starts the whole product (API, client build,
// workers) on an ephemeral port against its own database; each *.e2e.ts drives
// Debian's chromium through playwright-core.
export default defineConfig({
  test: {
    include: ['tests/e2e/**/*.e2e.ts'],
    environment: 'node',
    pool: 'forks',
    fileParallelism: false,
    testTimeout: 180_000,
    hookTimeout: 180_000,
    globalSetup: ['tests/e2e/e2e-setup.ts'],
  },
});
