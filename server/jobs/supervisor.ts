import { sql } from 'drizzle-orm';
import type PgBoss from 'pg-boss';
import type { Db, Queryable } from '../db/client.js';
import { bossDb, jobsAffected } from './boss-in-transaction.js';
import { sendRunJob } from './boss.js';
import { superviseFits } from './fit-supervisor.js';
import { superviseModeMaps } from './mode-map-supervisor.js';
import { HEARTBEAT_SECONDS, RUN_QUEUES, type RunKind } from './queues.js';
import { runStore } from '../runs/run-store.js';

interface SupervisorOptions {
  db: Db;
  boss: PgBoss;
  /** A running run whose heartbeat is older than this is taken to have lost its worker. */
  staleAfterSeconds: number;
  intervalSeconds: number;
  log?: (msg: string) => void;
  /** Supervise one group's runs only (tests that share a database with others). */
  groupId?: string;
}

/**
 * At start-up a run whose heartbeat is this old has no live worker: a live attempt beats
 * every second (run-job.ts), so it was interrupted by the previous shutdown and is
 * queued again at once rather than after staleAfterSeconds.
 */
export const STARTUP_STALE_SECONDS = 2 * HEARTBEAT_SECONDS;

/** What the run page shows (as "Resumes by itself: …") for a run interrupted by a shutdown: news, not a fault. */
export const INTERRUPTED_NOTE = 'the workers were stopped while this run was computing; it starts again';

interface SupervisorReport {
  /** Running runs whose worker stopped answering, put back in the queue. */
  handedOn: number;
  /** Runs that had no live queue job, sent again. */
  resent: number;
  /** Runs ended as failed because their attempts were used up. */
  failed: number;
}

type RunRef = {
  id: string;
  job_id: string | null;
  kind: RunKind;
  attempt: number;
};

const finishedJobStates = new Set(['completed', 'failed', 'cancelled']);

/**
 * One pass of the run supervisor. Several workers may supervise at once: every
 * change locks the run row first, and the run and its queue job change in one
 * transaction (boss-in-transaction.ts), so the two always agree.
 *
 * 1. A running run with no heartbeat for staleAfterSeconds lost its worker: it goes
 *    back to `queued` and its job is failed, which pg-boss retries after the retry
 *    delay (or the run fails when the retries are used up).
 * 2. A queued run older than staleAfterSeconds must have a live job (created,
 *    retry, or active under a worker that claims it at once). A job that is
 *    missing, finished, or active for longer without a claim (the fetching worker
 *    died) is replaced: the run is sent again, or fails once its attempts are used up.
 *
 * With `startup` (the first passes of a starting worker, startSupervisor) both ages are
 * STARTUP_STALE_SECONDS instead: what the previous shutdown left queued or running is
 * handed on at once, with a neutral note (INTERRUPTED_NOTE) instead of a lost-worker error.
 */
export async function superviseRuns(o: Omit<SupervisorOptions, 'intervalSeconds'> & { startup?: boolean; processStartedAt?: Date }): Promise<SupervisorReport> {
  const report: SupervisorReport = { handedOn: 0, resent: 0, failed: 0 };
  // The first pass of a starting process: runs left by the previous shutdown go back at once.
  const stale = o.startup ? Math.min(o.staleAfterSeconds, STARTUP_STALE_SECONDS) : o.staleAfterSeconds;
  // Only what predates this process: a run that beat (or was queued) since it started has a
  // live worker, even when a loaded machine delays its heartbeat past the short start-up age.
  const before = o.startup && o.processStartedAt ? o.processStartedAt : null;
  // Job ids that are not pg-boss's (uuid) come from tests' recording queues.
  const scope = sql`(job_id is null or job_id ~* '^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$')
    ${o.groupId ? sql`and group_id = ${o.groupId}` : sql``}`;
  const lost = await o.db.execute<{ id: string }>(sql`
    select id from runs where status = 'running' and heartbeat_at < now() - make_interval(secs => ${stale})
      ${before ? sql`and heartbeat_at < ${before}` : sql``} and ${scope}`);
  for (const { id } of lost.rows) {
    await guarded(o, id, () =>
      o.db.transaction(async (tx) => {
        const lostRun = await runStore.requeueLost(tx, id, stale, o.startup ? INTERRUPTED_NOTE : undefined);
        if (!lostRun) return; // another supervisor, or the attempt itself, got there first
        const run: RunRef = { id: lostRun.id, job_id: lostRun.jobId, kind: lostRun.kind as RunKind, attempt: lostRun.attempt };
        report.handedOn++;
        const queue = RUN_QUEUES[run.kind]?.name;
        if (!queue) return;
        const failed = run.job_id ? jobsAffected(await o.boss.fail(queue, run.job_id, { reason: 'worker lost' }, { db: bossDb(tx) })) : 0;
        if (failed === 0) {
          await replaceJob(o, tx, run, report, 'its queue job had already ended');
          return;
        }
        const job = await o.boss.getJobById(queue, run.job_id!, { db: bossDb(tx), includeArchive: false });
        if (job?.state === 'failed') {
          await failRun(tx, run.id, `the run's worker was lost on every attempt (${run.attempt})`);
          report.failed++;
          o.log?.(`run ${run.id}: worker lost during attempt ${run.attempt}; no retries left, the run failed`);
        } else if (o.startup) {
          o.log?.(`run ${run.id}: interrupted during attempt ${run.attempt} by the previous shutdown; queued again`);
        } else {
          o.log?.(`run ${run.id}: worker lost during attempt ${run.attempt}; job ${run.job_id} will be retried`);
        }
      }),
    );
  }

  const waiting = await o.db.execute<{ id: string }>(sql`
    select id from runs where status = 'queued' and created_at < now() - make_interval(secs => ${stale})
      ${before ? sql`and created_at < ${before}` : sql``} and ${scope}`);
  for (const { id } of waiting.rows) {
    await guarded(o, id, () =>
      o.db.transaction(async (tx) => {
        const locked = await tx.execute<RunRef>(sql`
        select id, job_id, kind, attempt from runs where id = ${id} and status = 'queued' for update skip locked`);
        const run = locked.rows[0];
        if (!run) return;
        const queue = RUN_QUEUES[run.kind]?.name;
        if (!queue) return;
        const job = run.job_id ? await o.boss.getJobById(queue, run.job_id, { db: bossDb(tx), includeArchive: true }) : null;
        if (!job || finishedJobStates.has(job.state)) {
          await replaceJob(o, tx, run, report, job ? `its queue job had ${job.state}` : 'it had no queue job');
          return;
        }
        if (job.state === 'active' && job.startedOn && Date.now() - new Date(job.startedOn).getTime() > stale * 1000) {
          // Fetched but never claimed: the fetching worker died in between.
          await o.boss.fail(queue, job.id, { reason: 'fetched but never started' }, { db: bossDb(tx) });
          o.log?.(`run ${run.id}: job ${job.id} was fetched but never started; it will be retried`);
        }
      }),
    );
  }
  return report;
}

/** One run's trouble (a lost connection, say) must not stop the pass for the others. */
async function guarded(o: Omit<SupervisorOptions, 'intervalSeconds'>, runId: string, step: () => Promise<unknown>) {
  try {
    await step();
  } catch (e) {
    o.log?.(`supervisor: run ${runId}: ${e instanceof Error ? e.message : String(e)}`);
  }
}

/** Sends a run whose job ended without ending the run again, or fails it when its attempts are used up. */
async function replaceJob(o: Omit<SupervisorOptions, 'intervalSeconds'>, tx: Queryable, run: RunRef, report: SupervisorReport, why: string) {
  const spec = RUN_QUEUES[run.kind];
  if (run.attempt > spec.retryLimit) {
    await failRun(tx, run.id, `the run was attempted ${run.attempt} times without finishing; ${why}`);
    report.failed++;
    o.log?.(`run ${run.id}: ${why}; attempts used up, the run failed`);
  } else {
    const jobId = await sendRunJob(o.boss, run.kind, run.id, { db: bossDb(tx) });
    await runStore.attachJob(tx, run.id, jobId, true);
    report.resent++;
    o.log?.(`run ${run.id}: ${why}; sent again as job ${jobId}`);
  }
}

async function failRun(tx: Queryable, runId: string, error: string) {
  await runStore.fail(tx, runId, error);
}

/**
 * A start-up pass at once (and again once STARTUP_STALE_SECONDS have passed, for a run whose
 * last beat came just before this start), then every intervalSeconds: one pass over the runs,
 * then the fits (fit-supervisor.ts), then the mode maps (mode-map-supervisor.ts).
 */
export function startSupervisor(o: SupervisorOptions): () => void {
  let busy = false;
  const processStartedAt = new Date();
  const pass = (startup: boolean) => {
    if (busy) return;
    busy = true;
    superviseRuns({ ...o, startup, processStartedAt })
      .then(() => superviseFits(o))
      .then(() => superviseModeMaps(o))
      .catch((e) => o.log?.(`supervisor: ${e.message}`))
      .finally(() => (busy = false));
  };
  pass(true);
  const again = setTimeout(() => pass(true), (STARTUP_STALE_SECONDS + 1) * 1000);
  const timer = setInterval(() => pass(false), o.intervalSeconds * 1000);
  return () => {
    clearTimeout(again);
    clearInterval(timer);
  };
}
