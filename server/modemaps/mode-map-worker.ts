/**
 * Computes queued mode maps, one at a time, each in a worker thread. Runs beside the
 * run worker loop in every worker process (worker-main.ts). A computing map beats
 * `mode_maps.heartbeat_at`; when its worker dies the supervisor (mode-map-supervisor.ts)
 * puts it back in the queue after POLEWARD_RUN_STALE_SECONDS, as it does for runs and fits.
 * Every end of an attempt is written, and its pg-boss job settled, in one transaction and
 * only while the attempt owns the map (mode-map-store.ts), so a late finisher changes nothing.
 */
import { eq } from 'drizzle-orm';
import type PgBoss from 'pg-boss';
import type { Db, Queryable } from '../db/client.js';
import { resonanceModes, resonances } from '../db/schema/catalogue.js';
import { modeMaps } from '../db/schema/mode-maps.js';
import { modelVersions } from '../db/schema/models.js';
import { bossDb, jobsAffected } from '../jobs/boss-in-transaction.js';
import { HEARTBEAT_SECONDS, MODE_MAP_QUEUE } from '../jobs/queues.js';
import type { ModeMapJobData } from './mode-map-queue.js';
import { ModeMapError, runModeMapInThread } from './mode-map-runner.js';
import { modeMapStore } from './mode-map-store.js';
import type { ModeMapPayload, ModeMapTask } from './mode-map-task.js';

export interface ModeMapWorkerOptions {
  db: Db;
  boss: PgBoss;
  compute?: (task: ModeMapTask, onProgress: (stage: string, fraction: number) => void, signal: AbortSignal) => Promise<ModeMapPayload>;
  pollSeconds?: number;
  log?: (msg: string) => void;
  /** Fault tests only: while this answers true the attempt beats no heartbeat, as a stalled process would. */
  heartbeatPaused?: () => boolean;
  /** Fault tests only: told how each attempt of this loop ended. */
  onOutcome?: (mapId: string, outcome: ModeMapOutcome) => void;
}

/** Ends this delivery's queue job inside `tx`, the transaction that wrote the map's end. */
export type MapJobSettler = (tx: Queryable, how: 'complete' | 'fail', output: Record<string, unknown>) => Promise<void>;

/** `superseded`: another attempt owns the map; this one wrote nothing and left the job alone. */
export type ModeMapOutcome = 'completed' | 'failed' | 'retry' | 'superseded' | 'skipped';

/** Milliseconds between heartbeats of a computing map (runs beat as often). */
const MAP_HEARTBEAT_MS = Math.min(1000, HEARTBEAT_SECONDS * 1000);

/**
 * One attempt at a map: claims it (attempt + 1), computes in a thread while beating the
 * heartbeat, then writes its end only while the attempt is still its own. A failure that
 * may pass fails the job so pg-boss retries it; a refused request or the last try fails the map.
 */
export async function handleModeMapJob(
  o: Pick<ModeMapWorkerOptions, 'db' | 'compute' | 'heartbeatPaused'>,
  job: { mapId: string; retryCount: number; retryLimit: number; jobId?: string; settle?: MapJobSettler },
): Promise<ModeMapOutcome> {
  const { db } = o;
  const settle = job.settle ?? (async () => {});
  const [map] = await db.select().from(modeMaps).where(eq(modeMaps.id, job.mapId));
  if (!map || map.status === 'completed' || map.status === 'failed') {
    await settle(db, 'complete', { dropped: map ? `the map had already ${map.status}` : 'the map no longer exists' });
    return 'skipped';
  }
  const attempt = await modeMapStore.startAttempt(db, map.id, job.jobId);
  if (attempt === null) {
    await settle(db, 'complete', { dropped: 'the map ended or has another live job' });
    return 'skipped';
  }
  const abort = new AbortController();
  let pending: { stage: string; fraction: number } | null = null;
  const beat = async () => {
    if (o.heartbeatPaused?.()) return;
    const p = pending;
    pending = null;
    if (!(await modeMapStore.beat(db, map.id, attempt, p))) abort.abort(); // the map was handed to another attempt
  };
  const timer = setInterval(() => void beat().catch(() => {}), MAP_HEARTBEAT_MS);
  try {
    const task = await buildTask(db, map);
    const result = await (o.compute ?? runModeMapInThread)(task, (stage, fraction) => (pending = { stage, fraction }), abort.signal);
    clearInterval(timer);
    const ended = await db.transaction(async (tx) => {
      const mine = await modeMapStore.complete(tx, map.id, attempt, result, result.engineVersion);
      if (mine) await settle(tx, 'complete', { completed: true });
      return mine;
    });
    return ended ? 'completed' : 'superseded';
  } catch (err) {
    clearInterval(timer);
    const message = err instanceof Error ? err.message : String(err);
    const final = err instanceof ModeMapError || job.retryCount >= job.retryLimit || attempt > job.retryLimit;
    const ended = await db.transaction(async (tx) => {
      const mine = final
        ? await modeMapStore.fail(tx, map.id, message, attempt)
        : await modeMapStore.retry(tx, map.id, attempt, `attempt ${attempt} failed, retrying: ${message}`);
      if (mine) await settle(tx, final ? 'complete' : 'fail', { message });
      return mine;
    });
    if (!ended) return 'superseded';
    return final ? 'failed' : 'retry';
  }
}

async function buildTask(db: Db, map: typeof modeMaps.$inferSelect): Promise<ModeMapTask> {
  const [version] = await db.select({ document: modelVersions.document }).from(modelVersions).where(eq(modelVersions.id, map.modelVersionId));
  if (!version) throw new ModeMapError('the model version of this map no longer exists');
  const params = map.params as { source: { kind: string; energy?: number; lead?: number; channel?: number }; husimi: ModeMapTask['husimi'] };
  if (params.source.kind === 'energy') {
    return {
      document: version.document,
      state: { kind: 'scattering', energy: params.source.energy!, lead: params.source.lead!, channel: params.source.channel! },
      husimi: params.husimi,
    };
  }
  const [r] = await db
    .select({ energy: resonances.energy, width: resonances.width, details: resonances.details, vector: resonanceModes.vector })
    .from(resonances)
    .innerJoin(resonanceModes, eq(resonanceModes.resonanceId, resonances.id))
    .where(eq(resonances.id, map.resonanceId!));
  if (!r) throw new ModeMapError('the resonance of this map no longer has a stored mode');
  const mode = new Float64Array(r.vector.buffer.slice(r.vector.byteOffset, r.vector.byteOffset + r.vector.byteLength));
  const sheet = (r.details as { sheet?: boolean[][] }).sheet;
  if (!sheet) throw new ModeMapError('the resonance has no recorded sheet');
  return { document: version.document, state: { kind: 'mode', energy: r.energy, width: r.width, mode, sheet }, husimi: params.husimi };
}

/** Polls the mode-map queue; returns a stop function. */
export function startModeMapWorker(o: ModeMapWorkerOptions): { stop: () => Promise<void> } {
  const log = o.log ?? ((m) => console.log(`[maps ${process.pid}] ${m}`));
  let stopped = false;
  const loop = (async () => {
    while (!stopped) {
      const [job] = (await o.boss.fetch<ModeMapJobData>(MODE_MAP_QUEUE.name, { batchSize: 1, includeMetadata: true }).catch((e) => {
        log(`fetch failed: ${e.message}`);
        return [];
      })) as PgBoss.JobWithMetadata<ModeMapJobData>[];
      if (!job) {
        await new Promise((r) => setTimeout(r, (o.pollSeconds ?? 1) * 1000));
        continue;
      }
      const settle: MapJobSettler = async (tx, how, output) => {
        const queue = MODE_MAP_QUEUE.name;
        const r =
          how === 'complete' ? await o.boss.complete(queue, job.id, output, { db: bossDb(tx) }) : await o.boss.fail(queue, job.id, output, { db: bossDb(tx) });
        if (jobsAffected(r) === 0) log(`map ${job.data.mapId}: job ${job.id} was no longer active when its attempt ended`);
      };
      try {
        const outcome = await handleModeMapJob(o, { mapId: job.data.mapId, retryCount: job.retryCount, retryLimit: job.retryLimit, jobId: job.id, settle });
        if (outcome === 'retry' || outcome === 'failed')
          log(`map ${job.data.mapId}: attempt ended ${outcome === 'retry' ? 'and will be retried' : 'as failed'}`);
        o.onOutcome?.(job.data.mapId, outcome);
      } catch (err) {
        // Nothing was recorded (the database is unreachable, say): the job stays active
        // and the supervisor hands the map on once its heartbeat is stale.
        log(`map ${job.data.mapId}: the attempt could not record its end (${err instanceof Error ? err.message : String(err)})`);
      }
    }
  })();
  return {
    async stop() {
      stopped = true;
      await Promise.race([loop, new Promise((r) => setTimeout(r, 100))]);
    },
  };
}
