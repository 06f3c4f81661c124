/**
 * The `peak-fit` queue: large fits computed by the worker processes, one at a time per
 * process, in a worker thread, with progress written to the fit row and announced on the
 * `run_events` channel (the fit's event stream follows it).
 * Idempotent: each try claims the fit with attempt + 1 and writes only while the attempt is
 * its own, replacing the fit's catalogue rows.
 */
import type PgBoss from 'pg-boss';
import type { Db } from '../db/client.js';
import { FIT_QUEUE } from '../jobs/queues.js';
import { fitStore } from './fit-store.js';
import { failFit, FitService, writeFitResult, type FitQueue, type FitRequest } from './fit-service.js';
import { runFitInThread } from './fit-thread-runner.js';

/** How often a computing fit beats its heartbeat (well inside the shortest stale time, 2 s). */
const FIT_HEARTBEAT_MS = 500;

export function fitQueue(boss: PgBoss): FitQueue {
  return {
    async enqueue(fitId) {
      const id = await boss.send(
        FIT_QUEUE.name,
        { fitId },
        { retryLimit: FIT_QUEUE.retryLimit, retryDelay: FIT_QUEUE.retryDelaySeconds, expireInSeconds: FIT_QUEUE.expireInSeconds },
      );
      if (!id) throw new Error(`the queue ${FIT_QUEUE.name} refused the job`);
      return id;
    },
  };
}

/**
 * Computes one queued fit. Claims it (attempt + 1), beats its heartbeat while the thread
 * computes, and writes its end (result or failure) only while the attempt still owns the
 * fit (fit-store.ts): a worker that lost the fit to the supervisor and ends late writes nothing.
 */
export async function handleFitJob(db: Db, fitId: string, log: (m: string) => void = () => {}): Promise<void> {
  const claimed = await fitStore.startAttempt(db, fitId);
  if (!claimed) return; // finished or gone: nothing to do
  const attempt = claimed.attempt;
  const service = new FitService(db, null);
  let task;
  try {
    task = await service.taskOf(fitId, claimed.groupId, claimed.request as unknown as FitRequest);
  } catch (err) {
    await failFit(db, fitId, attempt, err instanceof Error ? err.message : String(err));
    return;
  }
  // The heartbeat tells the fit supervisor (server/jobs/fit-supervisor.ts) this worker lives.
  let pending: number | undefined;
  let lastProgress = 0;
  const heartbeat = setInterval(() => {
    const fraction = pending;
    pending = undefined;
    void fitStore.beat(db, fitId, attempt, fraction).catch(() => {});
  }, FIT_HEARTBEAT_MS);
  const result = await runFitInThread(task, (fraction) => {
    const now = Date.now();
    if (now - lastProgress < 1000) return;
    lastProgress = now;
    pending = Math.min(0.99, fraction);
  })
    .catch(async (err: Error) => {
      if (await failFit(db, fitId, attempt, err.message)) log(`fit ${fitId} failed: ${err.message}`);
      return null;
    })
    .finally(() => clearInterval(heartbeat));
  if (!result) return;
  const written = await db.transaction((tx) => writeFitResult(tx, fitId, attempt, result));
  if (!written) log(`fit ${fitId}: attempt ${attempt} was superseded; its result was discarded`);
}

/** Subscribes this process to the `peak-fit` queue. */
export async function startFitWorker(o: { db: Db; boss: PgBoss; log?: (m: string) => void }): Promise<{ stop: () => Promise<void> }> {
  const log = o.log ?? ((m) => console.log(`[worker ${process.pid}] ${m}`));
  const id = await o.boss.work<{ fitId: string }>(FIT_QUEUE.name, { batchSize: 1, pollingIntervalSeconds: 1 }, async ([job]) => {
    await handleFitJob(o.db, job.data.fitId, log);
  });
  return {
    async stop() {
      await o.boss.offWork({ id }).catch(() => {});
    },
  };
}
