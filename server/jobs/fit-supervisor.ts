import { sql } from 'drizzle-orm';
import type PgBoss from 'pg-boss';
import type { Db, Queryable } from '../db/client.js';
import { fitStore } from '../fits/fit-store.js';
import { bossDb, jobsAffected } from './boss-in-transaction.js';
import { FIT_QUEUE } from './queues.js';

interface FitSupervisorOptions {
  db: Db;
  boss: PgBoss;
  /** A running fit whose heartbeat is older than this lost its worker (POLEWARD_RUN_STALE_SECONDS). */
  staleAfterSeconds: number;
  log?: (msg: string) => void;
  /** Supervise one group's fits only (tests that share a database with others). */
  groupId?: string;
}

interface FitSupervisorReport {
  /** Running fits whose worker stopped answering, put back in the queue. */
  handedOn: number;
  /** Fits ended as failed because their retries were used up. */
  failed: number;
}

type FitRef = { id: string; job_id: string | null; attempt: number };

/**
 * One pass of the fit supervisor, beside the run supervisor (supervisor.ts): a running fit
 * with no heartbeat for staleAfterSeconds lost its worker. It goes back to `queued` and its
 * `peak-fit` job is failed in the same transaction, which pg-boss retries after the retry
 * delay; when the job had already ended a new one is sent, and when the retries are used up
 * the fit fails with the reason. The worker's claim (attempt + 1) makes a late answer of the
 * lost attempt harmless.
 */
export async function superviseFits(o: FitSupervisorOptions): Promise<FitSupervisorReport> {
  const report: FitSupervisorReport = { handedOn: 0, failed: 0 };
  const stale = o.staleAfterSeconds;
  // Job ids that are not pg-boss's (uuid) come from tests' recording queues.
  const lost = await o.db.execute<{ id: string }>(sql`
    select id from peak_fits where status = 'running' and heartbeat_at < now() - make_interval(secs => ${stale})
    and (job_id is null or job_id ~* '^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$')
    ${o.groupId ? sql`and group_id = ${o.groupId}` : sql``}`);
  for (const { id } of lost.rows) {
    try {
      await o.db.transaction(async (tx) => {
        const lostFit = await fitStore.requeueLost(tx, id, stale);
        if (!lostFit) return; // another supervisor, or the attempt itself, got there first
        const fit: FitRef = { id: lostFit.id, job_id: lostFit.jobId, attempt: lostFit.attempt };
        report.handedOn++;
        const failed = fit.job_id ? jobsAffected(await o.boss.fail(FIT_QUEUE.name, fit.job_id, { reason: 'worker lost' }, { db: bossDb(tx) })) : 0;
        if (failed === 0) {
          await sendAgain(o, tx, fit, report);
        } else {
          const job = await o.boss.getJobById(FIT_QUEUE.name, fit.job_id!, { db: bossDb(tx), includeArchive: false });
          if (job?.state === 'failed') {
            await failFitRow(tx, fit.id, `the fit's worker was lost on every attempt (${fit.attempt})`);
            report.failed++;
            o.log?.(`fit ${fit.id}: worker lost during attempt ${fit.attempt}; no retries left, the fit failed`);
          } else {
            o.log?.(`fit ${fit.id}: worker lost during attempt ${fit.attempt}; job ${fit.job_id} will be retried`);
          }
        }
      });
    } catch (e) {
      o.log?.(`fit supervisor: fit ${id}: ${e instanceof Error ? e.message : String(e)}`);
    }
  }
  return report;
}

/** The fit's job had already ended: send a new one, or fail the fit once its attempts are used up. */
async function sendAgain(o: FitSupervisorOptions, tx: Queryable, fit: FitRef, report: FitSupervisorReport) {
  if (fit.attempt > FIT_QUEUE.retryLimit) {
    await failFitRow(tx, fit.id, `the fit was attempted ${fit.attempt} times without finishing`);
    report.failed++;
    return;
  }
  const jobId = await o.boss.send(
    FIT_QUEUE.name,
    { fitId: fit.id },
    { retryLimit: FIT_QUEUE.retryLimit, retryDelay: FIT_QUEUE.retryDelaySeconds, expireInSeconds: FIT_QUEUE.expireInSeconds, db: bossDb(tx) },
  );
  if (!jobId) throw new Error(`the queue ${FIT_QUEUE.name} refused the job`);
  await fitStore.attachJob(tx, fit.id, jobId, true);
  o.log?.(`fit ${fit.id}: its queue job had ended; sent again as job ${jobId}`);
}

async function failFitRow(tx: Queryable, fitId: string, error: string) {
  await fitStore.fail(tx, fitId, error);
}
