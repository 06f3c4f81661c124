import { sql } from 'drizzle-orm';
import type PgBoss from 'pg-boss';
import type { Db, Queryable } from '../db/client.js';
import { modeMapStore, type ModeMapRow } from '../modemaps/mode-map-store.js';
import { bossDb, jobsAffected } from './boss-in-transaction.js';
import { MODE_MAP_QUEUE } from './queues.js';

interface ModeMapSupervisorOptions {
  db: Db;
  boss: PgBoss;
  /** A computing map whose heartbeat is older than this lost its worker (POLEWARD_RUN_STALE_SECONDS). */
  staleAfterSeconds: number;
  log?: (msg: string) => void;
  /** Supervise one group's maps only (tests that share a database with others). */
  groupId?: string;
}

interface ModeMapSupervisorReport {
  /** Computing maps whose worker stopped answering, put back in the queue. */
  handedOn: number;
  /** Maps ended as failed because their retries were used up. */
  failed: number;
}

/**
 * One pass of the mode-map supervisor, beside the run and fit supervisors (supervisor.ts):
 * a running map with no heartbeat for staleAfterSeconds lost its worker. It goes back to
 * `queued` and its `mode-map` job is failed in the same transaction, which pg-boss retries
 * after the retry delay; a job that had already ended is replaced, and a map whose retries
 * are used up fails with the reason. The next worker's claim (attempt + 1) makes a late
 * answer of the lost attempt harmless. Without this pass a lost map came back only when
 * its pg-boss expiry (MODE_MAP_QUEUE.expireInSeconds) ran out.
 */
export async function superviseModeMaps(o: ModeMapSupervisorOptions): Promise<ModeMapSupervisorReport> {
  const report: ModeMapSupervisorReport = { handedOn: 0, failed: 0 };
  const stale = o.staleAfterSeconds;
  const lost = await o.db.execute<{ id: string }>(sql`
    select id from mode_maps where status = 'running' and heartbeat_at < now() - make_interval(secs => ${stale})
    and (job_id is null or job_id ~* '^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$')
    ${o.groupId ? sql`and group_id = ${o.groupId}` : sql``}`);
  for (const { id } of lost.rows) {
    try {
      await o.db.transaction(async (tx) => {
        const map = await modeMapStore.requeueLost(tx, id, stale);
        if (!map) return; // another supervisor, or the attempt itself, got there first
        report.handedOn++;
        const failed = map.jobId ? jobsAffected(await o.boss.fail(MODE_MAP_QUEUE.name, map.jobId, { reason: 'worker lost' }, { db: bossDb(tx) })) : 0;
        if (failed === 0) {
          await sendAgain(o, tx, map, report);
          return;
        }
        const job = await o.boss.getJobById(MODE_MAP_QUEUE.name, map.jobId!, { db: bossDb(tx), includeArchive: false });
        if (job?.state === 'failed') {
          await modeMapStore.fail(tx, map.id, `the map's worker was lost on every attempt (${map.attempt})`);
          report.failed++;
          o.log?.(`map ${map.id}: worker lost during attempt ${map.attempt}; no retries left, the map failed`);
        } else {
          o.log?.(`map ${map.id}: worker lost during attempt ${map.attempt}; job ${map.jobId} will be retried`);
        }
      });
    } catch (e) {
      o.log?.(`map supervisor: map ${id}: ${e instanceof Error ? e.message : String(e)}`);
    }
  }
  return report;
}

/** The map's job had already ended: send a new one, or fail the map once its attempts are used up. */
async function sendAgain(o: ModeMapSupervisorOptions, tx: Queryable, map: ModeMapRow, report: ModeMapSupervisorReport) {
  if (map.attempt > MODE_MAP_QUEUE.retryLimit) {
    await modeMapStore.fail(tx, map.id, `the map was attempted ${map.attempt} times without finishing`);
    report.failed++;
    return;
  }
  const q = MODE_MAP_QUEUE;
  const jobId = await o.boss.send(
    q.name,
    { mapId: map.id },
    { retryLimit: q.retryLimit, retryDelay: q.retryDelaySeconds, expireInSeconds: q.expireInSeconds, db: bossDb(tx) },
  );
  if (!jobId) throw new Error(`the queue ${q.name} refused the job`);
  await modeMapStore.attachJob(tx, map.id, jobId, true);
  o.log?.(`map ${map.id}: its queue job had ended; sent again as job ${jobId}`);
}
