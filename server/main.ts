// Runs the API and the built client: `npx tsx server/main.ts`. Reads config, connects
// to PostgreSQL, starts the local mail stand-in when it is the transport, and serves.
import { createServer, type Server } from 'node:http';
import { closeApp, createApp } from './app.js';
import { ConfigError, loadConfig } from './config.js';
import { connectDb } from './db/client.js';
import { ensureSiteOperator } from './auth/site-operator.js';
import { closePasswordPool } from './auth/password-hasher.js';
import { startMailStandIn, type MailStandIn } from './mail/mail-stand-in.js';
import { createMailer } from './mail/mailer.js';
import { runQueue, startBoss } from './jobs/boss.js';
import { modeMapQueue } from './modemaps/mode-map-queue.js';
import { fitQueue } from './fits/fit-job.js';
import { RunEvents } from './runs/run-events.js';
import { notificationQueue } from './fabrication/notification-queue.js';
import { startNotificationWorker } from './fabrication/notification-job.js';
import { studyQueue } from './studies/study-queue.js';

async function main(): Promise<void> {
  let config;
  try {
    config = loadConfig();
  } catch (err) {
    if (err instanceof ConfigError) {
      console.error(err.message);
      process.exit(1);
    }
    throw err;
  }
  const handle = connectDb(config.databaseUrl);
  try {
    await handle.pool.query('select 1');
  } catch (err) {
    console.error(`[poleward] cannot reach PostgreSQL at ${config.databaseUrl}: ${(err as Error).message}\n  start it with: npx tsx scripts/db.ts start`);
    process.exit(1);
  }

  let standIn: MailStandIn | undefined;
  if (config.mailStandIn) {
    // A local set-up: its first admin runs it, and is the one who may read the outbox.
    const operator = await ensureSiteOperator(handle.db);
    if (operator) console.log(`[poleward] site operator (reads the mail outbox): ${operator}`);
    const port = Number(new URL(config.smtpUrl).port || 25);
    try {
      standIn = await startMailStandIn({ port, db: handle.db });
      console.log(`[poleward] local mail stand-in on 127.0.0.1:${standIn.port} (messages in /api/outbox)`);
    } catch (err) {
      // Another process (e.g. the start script) may already run it; mail still arrives there.
      if ((err as NodeJS.ErrnoException).code !== 'EADDRINUSE') throw err;
      console.log(`[poleward] mail stand-in port ${port} already in use; assuming it runs in another process`);
    }
  }

  const mailer = createMailer(config.smtpUrl, config.mailFrom);
  const boss = await startBoss({ databaseUrl: config.databaseUrl });
  const runEvents = new RunEvents(config.databaseUrl);
  await runEvents.start();
  const app = createApp({
    db: handle.db,
    config,
    mailer,
    queue: runQueue(boss),
    modeMapQueue: modeMapQueue(boss),
    fitQueue: fitQueue(boss),
    runEvents,
    notifications: notificationQueue(boss),
    studyQueue: studyQueue(boss, config.studyStepExpireSeconds),
  });
  // The API process sends the e-mail notifications: it holds the mailer, and sending is light I/O.
  const notificationWorker = await startNotificationWorker({ db: handle.db, boss, mailer });
  // createServer + 'listening' rather than app.listen: Express 5 calls listen's callback on errors too.
  const server: Server = createServer(app);
  server.once('error', (err) => {
    console.error(`[poleward] cannot listen on ${config.host}:${config.port}: ${err.message}`);
    process.exit(1);
  });
  // 127.0.0.1 unless POLEWARD_HOST says otherwise: a shared server sits behind a TLS proxy.
  server.listen(config.port, config.host, () => {
    const shown = config.host.includes(':') ? `[${config.host}]` : config.host;
    console.log(`[poleward] serving on http://${shown}:${config.port} (public URL ${config.publicUrl})`);
  });

  let stopping = false;
  const stop = async (signal: string) => {
    if (stopping) return;
    stopping = true;
    console.log(`[poleward] ${signal}: shutting down`);
    // Stop taking requests, let running ones finish, then release the pool.
    await new Promise<void>((done) => server.close(() => done()));
    await closeApp(app);
    await notificationWorker.stop();
    await standIn?.close();
    await runEvents.close();
    await boss.stop({ graceful: false, wait: false }).catch(() => {});
    mailer.close();
    await closePasswordPool();
    await handle.close();
    process.exit(0);
  };
  process.on('SIGINT', () => void stop('SIGINT'));
  process.on('SIGTERM', () => void stop('SIGTERM'));
}

await main();
