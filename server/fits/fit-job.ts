/**
 * The `peak-fit` queue: large fits computed by the worker processes, one at a time per
 * process, in a worker thread, with progress written to the fit row and announced on the
 * `run_events` channel (the fit's event stream follows it).
 * Idempotent: each try claims the fit with attempt + 1 and writes only while the attempt is
 * its own, replacing the fit's catalogue rows.
 */
import { and, eq, inArray, sql } from 'drizzle-orm';
import type PgBoss from 'pg-boss';
import type { Db } from '../db/client.js';
import { peakFits } from '../db/schema/fits.js';
import { FIT_QUEUE } from '../jobs/queues.js';
import { notifyFit } from './fit-notify.js';
import { failFit, FitService, writeFitResult, type FitQueue, type FitRequest } from './fit-service.js';
import { runFitInThread } from './fit-thread-runner.js';

/** How often a computing fit beats its heartbeat (well inside the shortest stale time, 2 s). */
const FIT_HEARTBEAT_MS = 500;

export function fitQueue(boss: PgBoss): FitQueue {
  return {
    async enqueue(fitId) {
      const id = await boss.send(FIT_QUEUE.name, { fitId }, { retryLimit: FIT_QUEUE.retryLimit, retryDelay: FIT_QUEUE.retryDelaySeconds, expireInSeconds: FIT_QUEUE.expireInSeconds });
      if (!id) throw new Error(`the queue ${FIT_QUEUE.name} refused the job`);
      return id;
    },
  };
}

/** Computes one queued fit. Throws when the computation failed (pg-boss retries it). */
export async function handleFitJob(db: Db, fitId: string, log: (m: string) => void = () => {}): Promise<void> {
  const [claimed] = await db
    .update(peakFits)
    .set({ status: 'running', attempt: sql`${peakFits.attempt} + 1`, progressFraction: 0, error: null, heartbeatAt: new Date() })
    .where(and(eq(peakFits.id, fitId), inArray(peakFits.status, ['queued', 'running'])))
    .returning({ attempt: peakFits.attempt, groupId: peakFits.groupId, request: peakFits.request });
  if (!claimed) return; // finished or gone: nothing to do
  await notifyFit(db, fitId);
  const service = new FitService(db, null);
  let task;
  try {
    task = await service.taskOf(fitId, claimed.groupId, claimed.request as unknown as FitRequest);
  } catch (err) {
    await failFit(db, [fitId], err instanceof Error ? err.message : String(err));
    return;
  }
  // The heartbeat tells the fit supervisor (server/jobs/fit-supervisor.ts) this worker lives.
  const heartbeat = setInterval(() => {
    void db
      .update(peakFits)
      .set({ heartbeatAt: new Date() })
      .where(and(eq(peakFits.id, fitId), eq(peakFits.attempt, claimed.attempt), eq(peakFits.status, 'running')))
      .catch(() => {});
  }, FIT_HEARTBEAT_MS);
  let lastWrite = 0;
  const result = await runFitInThread(task, (fraction) => {
    const now = Date.now();
    if (now - lastWrite < 1000) return;
    lastWrite = now;
    void db
      .update(peakFits)
      .set({ progressFraction: Math.min(0.99, fraction) })
      .where(and(eq(peakFits.id, fitId), eq(peakFits.attempt, claimed.attempt)))
      .then(() => notifyFit(db, fitId))
      .catch(() => {});
  }).catch(async (err: Error) => {
    await failFit(db, [fitId], err.message);
    log(`fit ${fitId} failed: ${err.message}`);
    return null;
  }).finally(() => clearInterval(heartbeat));
  if (!result) return;
  await db.transaction((tx) => writeFitResult(tx, fitId, claimed.attempt, result));
  await notifyFit(db, fitId);
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
