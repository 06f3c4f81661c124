import { defineConfig } from 'vitest/config';

// Engine tests need nothing but Node; server and API tests run against the real
// PostgreSQL started by tests/global-setup.ts. The Angular specs under src/ run
// through `ng test` instead.
export default defineConfig({
  test: {
    // Off unless asked (`--coverage`, as `npm test` does): v8's counters slow the engine's kernels.
    // Code run in worker threads and child processes (engine threads, scripts/serve.ts) is not counted.
    coverage: {
      provider: 'v8',
      include: ['shared/**/*.ts', 'server/**/*.ts'],
      reporter: ['text-summary', 'json-summary'],
      reportsDirectory: 'test-output/coverage',
      // The figures are printed even when a test fails.
      reportOnFailure: true,
    },
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
          // Reading ~300 files takes a few seconds on a loaded machine, more under coverage.
          testTimeout: 60_000,
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
