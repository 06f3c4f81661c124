// Starts the product as `npm start` does, but in this process and on an ephemeral
// port: a clean poleward_e2e database, migrations, the demo lab, pg-boss, one worker
// loop computing in worker threads, and the API serving the production client build.
import { createServer } from 'node:http';
import type { AddressInfo } from 'node:net';
import type { TestProject } from 'vitest/node';
import { createApp } from '../../server/app.js';
import { loadConfig } from '../../server/config.js';
import { connectDb } from '../../server/db/client.js';
import { runQueue, startBoss } from '../../server/jobs/boss.js';
import { runInThread } from '../../server/jobs/thread-runner.js';
import { startWorkerLoop } from '../../server/jobs/worker.js';
import { modeMapQueue } from '../../server/modemaps/mode-map-queue.js';
import { startModeMapWorker } from '../../server/modemaps/mode-map-worker.js';
import { startMailStandIn } from '../../server/mail/mail-stand-in.js';
import { createMailer } from '../../server/mail/mailer.js';
import { RunEvents } from '../../server/runs/run-events.js';
import { notificationQueue } from '../../server/fabrication/notification-queue.js';
import { startNotificationWorker } from '../../server/fabrication/notification-job.js';
import { studyQueue } from '../../server/studies/study-queue.js';
import { startStudyWorker } from '../../server/studies/study-worker.js';
import { ensureDatabase } from '../../scripts/db.js';
import { migrate } from '../../scripts/migrate.js';
import { seedDemo } from '../../scripts/seed.js';

declare module 'vitest' {
  export interface ProvidedContext {
    baseUrl: string;
  }
}

export default async function setup(project: TestProject): Promise<() => Promise<void>> {
  // POLEWARD_E2E_DB lets two browser-test runs share the server (as POLEWARD_TEST_DB does for vitest).
  const name = process.env.POLEWARD_E2E_DB ?? 'poleward_e2e';
  const server = await ensureDatabase({ databases: [name], recreate: true, fastUnsafe: true, log: () => {} });
  const url = server.url(name);
  await migrate(url);
  const handle = connectDb(url, 6);
  await seedDemo(handle.db, { passwordCost: 4 });
  const standIn = await startMailStandIn({ port: 0, db: handle.db });
  const config = loadConfig({
    NODE_ENV: 'test',
    DATABASE_URL: url,
    POLEWARD_JWT_SECRET: 'e2e-only-secret-0123456789abcdefghijklmnopq',
    POLEWARD_SMTP_URL: `smtp://127.0.0.1:${standIn.port}`,
  });
  const boss = await startBoss({ databaseUrl: url });
  const runEvents = new RunEvents(url);
  await runEvents.start();
  const mailer = createMailer(config.smtpUrl, config.mailFrom);
  const app = createApp({
    db: handle.db,
    config,
    mailer,
    queue: runQueue(boss),
    modeMapQueue: modeMapQueue(boss),
    runEvents,
    notifications: notificationQueue(boss),
    studyQueue: studyQueue(boss),
    log: () => {},
  });
  const notificationWorker = await startNotificationWorker({ db: handle.db, boss, mailer, pollingIntervalSeconds: 0.5 });
  const http = createServer(app);
  await new Promise<void>((done) => http.listen(0, '127.0.0.1', done));
  const { port } = http.address() as AddressInfo;
  const worker = startWorkerLoop({ db: handle.db, boss, compute: runInThread, pollSeconds: 0.5, log: () => {} });
  const maps = startModeMapWorker({ db: handle.db, boss, pollSeconds: 0.5, log: () => {} });
  // Study steps (parameter studies, tolerance ensembles) run in a worker thread each, as under `npm run worker`.
  const studySteps = startStudyWorker({ db: handle.db, boss, pollSeconds: 0.5, log: () => {} });
  project.provide('baseUrl', `http://127.0.0.1:${port}`);
  return async () => {
    await worker.stop();
    await maps.stop();
    await studySteps.stop();
    await notificationWorker.stop();
    http.closeAllConnections();
    await new Promise<void>((done) => http.close(() => done()));
    await runEvents.close();
    await boss.stop({ graceful: false, wait: true });
    await standIn.close();
    mailer.close();
    await handle.close();
  };
}
