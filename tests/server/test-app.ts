// Builds the real app for API tests: real database (poleward_test), a local SMTP
// stand-in on an ephemeral port as the mail transport, HTTP on an ephemeral port.
import { createServer, type Server } from 'node:http';
import type { AddressInfo } from 'node:net';
import { inject } from 'vitest';
import { closeApp, createApp, type AppDeps } from '../../server/app.js';
import { loadConfig, type Config } from '../../server/config.js';
import { connectDb, type DbHandle } from '../../server/db/client.js';
import { startMailStandIn, type MailStandIn } from '../../server/mail/mail-stand-in.js';
import { createMailer } from '../../server/mail/mailer.js';
import type { RunQueue } from '../../server/jobs/boss.js';

/** Jobs the API queued during a test (tests of the workers use the real pg-boss instead). */
export interface RecordingQueue extends RunQueue {
  sent: { kind: string; runId: string; jobId: string }[];
}

export function recordingQueue(): RecordingQueue {
  const sent: RecordingQueue['sent'] = [];
  return {
    sent,
    async enqueue(kind, runId) {
      const jobId = `job-${sent.length + 1}`;
      sent.push({ kind, runId, jobId });
      return jobId;
    },
    async cancel() {},
  };
}

/** Fast bcrypt for tests; production uses the default cost. */
export const testPasswordCost = 4;
export const testJwtSecret = 'test-only-secret-0123456789abcdefghijklmnop';

export interface TestApp {
  server: Server;
  baseUrl: string;
  config: Config;
  handle: DbHandle;
  standIn: MailStandIn;
  close(): Promise<void>;
}

export function testDatabaseUrl(): string {
  return process.env.DATABASE_URL ?? inject('databaseUrl');
}

export async function startTestApp(
  overrides: Partial<Omit<AppDeps, 'db' | 'config' | 'mailer'>> & { env?: Record<string, string>; config?: Partial<Config> } = {},
): Promise<TestApp> {
  const handle = connectDb(testDatabaseUrl(), 4);
  const standIn = await startMailStandIn({ port: 0, db: handle.db });
  const config = loadConfig({
    NODE_ENV: 'test',
    DATABASE_URL: testDatabaseUrl(),
    POLEWARD_JWT_SECRET: testJwtSecret,
    POLEWARD_PUBLIC_URL: 'http://127.0.0.1:8640',
    POLEWARD_SMTP_URL: `smtp://127.0.0.1:${standIn.port}`,
    // Tests queue runs that no worker takes; the run limits have their own tests (input-limits).
    POLEWARD_RUNS_PER_USER: '1000',
    POLEWARD_RUNS_PER_GROUP: '1000',
    // One compute thread: the test process shares two cores with vitest and PostgreSQL.
    POLEWARD_COMPUTE_THREADS: '1',
    ...overrides.env,
  });
  Object.assign(config, overrides.config);
  const mailer = createMailer(`smtp://127.0.0.1:${standIn.port}`, config.mailFrom);
  const { env: _env, config: _config, ...appOverrides } = overrides;
  const app = createApp({ db: handle.db, config, mailer, passwordCost: testPasswordCost, log: () => {}, queue: recordingQueue(), ...appOverrides });
  const server = createServer(app);
  await new Promise<void>((done) => server.listen(0, '127.0.0.1', done));
  const { port } = server.address() as AddressInfo;
  return {
    server,
    baseUrl: `http://127.0.0.1:${port}`,
    config,
    handle,
    standIn,
    async close() {
      await new Promise<void>((done) => server.close(() => done()));
      await closeApp(app);
      await standIn.close();
      mailer.close();
      await handle.close();
    },
  };
}
