/** Entry of a worker process: `tsx server/jobs/worker-main.ts`. */
import { loadConfig } from '../config.js';
import { connectDb } from '../db/client.js';
import { startBoss } from './boss.js';
import { runPartitioned } from './partitioned-run.js';
import { startWorkerLoop } from './worker.js';
import { startModeMapWorker } from '../modemaps/mode-map-worker.js';
import { startFitWorker } from '../fits/fit-job.js';
import { notificationQueue } from '../fabrication/notification-queue.js';
import { runEndedNotifier } from '../fabrication/run-notification.js';
import { startStudyWorker } from '../studies/study-worker.js';

const config = loadConfig();
const handle = connectDb(config.databaseUrl, 4);
const boss = await startBoss({ databaseUrl: config.databaseUrl });
const worker = startWorkerLoop({
  db: handle.db,
  boss,
  compute: (task, onProgress, signal) => runPartitioned(task, config.threadsPerRun, onProgress, signal),
  staleAfterSeconds: config.runStaleSeconds,
  supervisorSeconds: Math.max(1, Math.min(10, Math.floor(config.runStaleSeconds / 3))),
  onEnded: runEndedNotifier(handle.db, notificationQueue(boss), config.publicUrl),
});
const fitWorker = await startFitWorker({ db: handle.db, boss });
const maps = startModeMapWorker({ db: handle.db, boss });
const studySteps = startStudyWorker({ db: handle.db, boss });
console.log(`[worker ${process.pid}] waiting for runs, mode maps, fits and study steps`);

let stopping = false;
async function shutdown(signal: string) {
  if (stopping) return;
  stopping = true;
  console.log(`[worker ${process.pid}] ${signal}: stopping`);
  await worker.stop();
  await maps.stop();
  await studySteps.stop();
  await fitWorker.stop();
  await boss.stop({ graceful: false, wait: false }).catch(() => {});
  await handle.close().catch(() => {});
  process.exit(0);
}
process.on('SIGTERM', () => void shutdown('SIGTERM'));
process.on('SIGINT', () => void shutdown('SIGINT'));
