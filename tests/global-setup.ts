// Server tests run against a real PostgreSQL: a clean poleward_test database on the
// project's own server (started if needed, fsync off because test data is disposable).
import type { TestProject } from 'vitest/node';
import { ensureDatabase } from '../scripts/db.js';
import { migrate } from '../scripts/migrate.js';

declare module 'vitest' {
  export interface ProvidedContext {
    databaseUrl: string;
  }
}

export default async function setup(project: TestProject): Promise<void> {
  // POLEWARD_TEST_DB lets two test runs share the server without dropping each other's database.
  const name = process.env.POLEWARD_TEST_DB ?? 'poleward_test';
  const server = await ensureDatabase({ databases: [name], recreate: true, fastUnsafe: true, log: () => {} });
  const url = server.url(name);
  await migrate(url);
  // Both: env for code that reads DATABASE_URL, provide/inject for tests that prefer it.
  process.env.DATABASE_URL = url;
  project.provide('databaseUrl', url);
}
