import { eq, sql } from 'drizzle-orm';
import type PgBoss from 'pg-boss';
import type { Db } from '../db/client.js';
import { runs } from '../db/schema/runs.js';
import { RUN_QUEUES, type RunKind } from './queues.js';

export interface SupervisorOptions {
  db: Db;
  boss: PgBoss;
  /** A running run whose heartbeat is older than this is taken to have lost its worker. */
  staleAfterSeconds: number;
  intervalSeconds: number;
  log?: (msg: string) => void;
}

/**
 * Finds runs whose worker died (no heartbeat for staleAfterSeconds) and fails
 * their pg-boss job, which pg-boss then retries after its retry delay (or marks
 * failed when the retries are used up, and so does the run). Several workers
 * may supervise at once: the UPDATE … RETURNING hands each lost run to one.
 */
export async function requeueLostRuns(o: Omit<SupervisorOptions, 'intervalSeconds'>): Promise<number> {
  const lost = await o.db.execute<{ id: string; job_id: string | null; kind: RunKind; attempt: number }>(sql`
    update ${runs} set status = 'queued', progress_stage = 'waiting for another worker',
      error = 'the worker of attempt ' || attempt || ' stopped answering; the run was put back in the queue'
    where status = 'running' and heartbeat_at < now() - make_interval(secs => ${o.staleAfterSeconds})
    returning id, job_id, kind, attempt`);
  for (const run of lost.rows) {
    if (!run.job_id) continue;
    const queue = RUN_QUEUES[run.kind]?.name;
    if (!queue) continue;
    await o.boss.fail(queue, run.job_id, { reason: 'worker lost' });
    const job = await o.boss.getJobById(queue, run.job_id);
    if (job?.state === 'failed') {
      await o.db
        .update(runs)
        .set({ status: 'failed', finishedAt: new Date(), error: `the run's worker was lost on every attempt (${run.attempt})` })
        .where(eq(runs.id, run.id));
    }
    await o.db.execute(sql`select pg_notify('run_events', ${run.id})`);
    o.log?.(`run ${run.id}: worker lost during attempt ${run.attempt}; job ${job?.state === 'failed' ? 'failed for good' : 'will be retried'}`);
  }
  return lost.rows.length;
}

export function startSupervisor(o: SupervisorOptions): () => void {
  let busy = false;
  const timer = setInterval(() => {
    if (busy) return;
    busy = true;
    requeueLostRuns(o)
      .catch((e) => o.log?.(`supervisor: ${e.message}`))
      .finally(() => (busy = false));
  }, o.intervalSeconds * 1000);
  return () => clearInterval(timer);
}
