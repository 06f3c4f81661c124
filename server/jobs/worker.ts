/**
 * A worker process: takes one run at a time from the run queues and computes it
 * in a worker thread. Start several (POLEWARD_WORKERS) to use several cores.
 * The process entry is worker-main.ts.
 */
import type PgBoss from 'pg-boss';
import type { Db } from '../db/client.js';
import { bossDb, jobsAffected } from './boss-in-transaction.js';
import { RUN_QUEUES, DEFAULT_STALE_AFTER_SECONDS, type RunJobData } from './queues.js';
import { handleRunJob, type JobSettler, type RunJobDeps, type RunJobOutcome } from './run-job.js';
import { startSupervisor } from './supervisor.js';

interface WorkerLoopOptions {
  db: Db;
  boss: PgBoss;
  compute: RunJobDeps['compute'];
  pollSeconds?: number;
  staleAfterSeconds?: number;
  /** Seconds between supervisor passes; 0 runs no supervisor in this loop (tests drive it by hand). */
  supervisorSeconds?: number;
  log?: (msg: string) => void;
  /** Fault tests only: see RunJobDeps.heartbeatPaused. */
  heartbeatPaused?: () => boolean;
  /** Told once a run has ended for good (see RunJobDeps.onEnded). */
  onEnded?: RunJobDeps['onEnded'];
  /** Fault tests only: told how each attempt of this loop ended. */
  onOutcome?: (runId: string, outcome: RunJobOutcome) => void;
}

/**
 * Polls every run queue in turn and handles one job at a time, so one process
 * never runs two engine threads. The job is completed or failed by the attempt
 * itself, in the transaction that writes the run's end (run-job.ts), so a stale
 * attempt never ends the live job. Returns a stop function (waits for nothing:
 * a run in progress is left to the supervisor or its retry).
 */
export function startWorkerLoop(o: WorkerLoopOptions): { stop: () => Promise<void> } {
  const log = o.log ?? ((m) => console.log(`[worker ${process.pid}] ${m}`));
  let stopped = false;
  const supervisorSeconds = o.supervisorSeconds ?? 10;
  const stopSupervisor =
    supervisorSeconds > 0
      ? startSupervisor({
          db: o.db,
          boss: o.boss,
          staleAfterSeconds: o.staleAfterSeconds ?? DEFAULT_STALE_AFTER_SECONDS,
          intervalSeconds: supervisorSeconds,
          log,
        })
      : () => {};
  const queues = Object.values(RUN_QUEUES).map((q) => q.name);
  const loop = (async () => {
    while (!stopped) {
      let worked = false;
      for (const queue of queues) {
        if (stopped) break;
        const [job] = (await o.boss.fetch<RunJobData>(queue, { batchSize: 1, includeMetadata: true }).catch((e) => {
          log(`fetch from ${queue} failed: ${e.message}`);
          return [];
        })) as PgBoss.JobWithMetadata<RunJobData>[];
        if (!job) continue;
        worked = true;
        const settle: JobSettler = async (tx, how, output) => {
          const r =
            how === 'complete'
              ? await o.boss.complete(queue, job.id, output, { db: bossDb(tx) })
              : await o.boss.fail(queue, job.id, output, { db: bossDb(tx) });
          if (jobsAffected(r) === 0) log(`run ${job.data.runId}: job ${job.id} was no longer active when its attempt ended`);
        };
        try {
          const outcome = await handleRunJob(
            { db: o.db, compute: o.compute, log, heartbeatPaused: o.heartbeatPaused, onEnded: o.onEnded },
            { runId: job.data.runId, retryCount: job.retryCount, retryLimit: job.retryLimit, jobId: job.id, settle },
          );
          o.onOutcome?.(job.data.runId, outcome);
        } catch (err) {
          // Nothing was recorded (the database is unreachable, say): the job stays
          // active and the supervisor hands the run on once its heartbeat is stale.
          const message = err instanceof Error ? err.message : String(err);
          log(`run ${job.data.runId}: the attempt could not record its end (${message}); the supervisor will hand the run on`);
        }
      }
      if (!worked) await new Promise((r) => setTimeout(r, (o.pollSeconds ?? 1) * 1000));
    }
  })();
  return {
    async stop() {
      stopped = true;
      stopSupervisor();
      await Promise.race([loop, new Promise((r) => setTimeout(r, 100))]);
    },
  };
}
