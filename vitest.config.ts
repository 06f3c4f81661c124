import { defineConfig } from 'vitest/config';

// Engine tests need nothing but Node; server and API tests run against the real
// PostgreSQL started by tests/global-setup.ts. The Angular specs under src/ run
// through `ng test` instead.
export default defineConfig({
  test: {
    projects: [
      {
        test: {
          name: 'engine',
          include: ['tests/engine/**/*.test.ts'],
          environment: 'node',
          pool: 'threads',
          testTimeout: 120_000,
        },
      },
      {
        test: {
          // The shape of the code: no import loops, no feature folder importing another.
          name: 'structure',
          include: ['tests/structure/**/*.test.ts'],
          environment: 'node',
        },
      },
      {
        test: {
          name: 'server',
          include: ['tests/server/**/*.test.ts'],
          environment: 'node',
          pool: 'forks',
          fileParallelism: false,
          testTimeout: 60_000,
          hookTimeout: 120_000,
          globalSetup: ['tests/global-setup.ts'],
        },
      },
    ],
  },
});
