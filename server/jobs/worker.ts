/**
 * A worker process: takes one run at a time from the run queues and computes it
 * in a worker thread. Start several (POLEWARD_WORKERS) to use several cores.
 * The process entry is worker-main.ts.
 */
import { sql } from 'drizzle-orm';
import type PgBoss from 'pg-boss';
import { runs } from '../db/schema/runs.js';
import type { Db } from '../db/client.js';
import { RUN_QUEUES, DEFAULT_STALE_AFTER_SECONDS, type RunJobData } from './queues.js';
import { handleRunJob, type RunJobDeps } from './run-job.js';
import { startSupervisor } from './supervisor.js';

export interface WorkerLoopOptions {
  db: Db;
  boss: PgBoss;
  compute: RunJobDeps['compute'];
  pollSeconds?: number;
  staleAfterSeconds?: number;
  supervisorSeconds?: number;
  log?: (msg: string) => void;
}

/**
 * Polls every run queue in turn and handles one job at a time, so one process
 * never runs two engine threads. Returns a stop function (waits for nothing:
 * a run in progress is left to the supervisor or its retry).
 */
export function startWorkerLoop(o: WorkerLoopOptions): { stop: () => Promise<void> } {
  const log = o.log ?? ((m) => console.log(`[worker ${process.pid}] ${m}`));
  let stopped = false;
  const stopSupervisor = startSupervisor({
    db: o.db,
    boss: o.boss,
    staleAfterSeconds: o.staleAfterSeconds ?? DEFAULT_STALE_AFTER_SECONDS,
    intervalSeconds: o.supervisorSeconds ?? 10,
    log,
  });
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
        // The run row must know its job so the supervisor can fail it if this process dies.
        await o.db.execute(setJobId(job.data.runId, job.id));
        try {
          await handleRunJob({ db: o.db, compute: o.compute, log }, { runId: job.data.runId, retryCount: job.retryCount, retryLimit: job.retryLimit });
          await o.boss.complete(queue, job.id);
        } catch (err) {
          const message = err instanceof Error ? err.message : String(err);
          log(`run ${job.data.runId} failed (attempt ${job.retryCount + 1}): ${message}`);
          await o.boss.fail(queue, job.id, { message }).catch(() => {});
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

function setJobId(runId: string, jobId: string) {
  return sql`update ${runs} set job_id = ${jobId} where id = ${runId}`;
}
