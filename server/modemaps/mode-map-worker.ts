/**
 * Computes queued mode maps, one at a time, each in a worker thread. Runs beside the
 * run worker loop in every worker process (worker-main.ts). A map whose worker dies
 * comes back when its pg-boss job expires (queues.ts, MODE_MAP_QUEUE) and is retried.
 */
import { and, eq } from 'drizzle-orm';
import type PgBoss from 'pg-boss';
import type { Db } from '../db/client.js';
import { resonanceModes, resonances } from '../db/schema/catalogue.js';
import { modeMaps } from '../db/schema/mode-maps.js';
import { modelVersions } from '../db/schema/models.js';
import { MODE_MAP_QUEUE } from '../jobs/queues.js';
import type { ModeMapJobData } from './mode-map-queue.js';
import { ModeMapError, runModeMapInThread } from './mode-map-runner.js';
import type { ModeMapPayload, ModeMapTask } from './mode-map-task.js';

export interface ModeMapWorkerOptions {
  db: Db;
  boss: PgBoss;
  compute?: (task: ModeMapTask, onProgress: (stage: string, fraction: number) => void) => Promise<ModeMapPayload>;
  pollSeconds?: number;
  log?: (msg: string) => void;
}

/** One attempt at a map; throws to let pg-boss retry a failure that may pass. */
export async function handleModeMapJob(
  o: Pick<ModeMapWorkerOptions, 'db' | 'compute'>,
  job: { mapId: string; retryCount: number; retryLimit: number },
): Promise<void> {
  const { db } = o;
  const [map] = await db.select().from(modeMaps).where(eq(modeMaps.id, job.mapId));
  if (!map || map.status === 'completed') return;
  const [claimed] = await db
    .update(modeMaps)
    .set({ status: 'running', attempt: map.attempt + 1, progressStage: 'starting', progressFraction: 0, error: null })
    .where(and(eq(modeMaps.id, map.id), eq(modeMaps.attempt, map.attempt)))
    .returning({ attempt: modeMaps.attempt });
  if (!claimed) return; // another worker took it
  const attempt = claimed.attempt;
  const mine = and(eq(modeMaps.id, map.id), eq(modeMaps.attempt, attempt));
  try {
    const task = await buildTask(db, map);
    let last = 0;
    let writing: Promise<unknown> = Promise.resolve();
    const result = await (o.compute ?? runModeMapInThread)(task, (stage, fraction) => {
      const now = Date.now();
      if (now - last < 500) return;
      last = now;
      writing = writing.then(() => db.update(modeMaps).set({ progressStage: stage, progressFraction: fraction }).where(mine)).catch(() => {});
    });
    await writing;
    await db
      .update(modeMaps)
      .set({ status: 'completed', result, engineVersion: result.engineVersion, progressStage: 'done', progressFraction: 1, finishedAt: new Date() })
      .where(mine);
  } catch (err) {
    const message = err instanceof Error ? err.message : String(err);
    const final = err instanceof ModeMapError || job.retryCount >= job.retryLimit;
    await db
      .update(modeMaps)
      .set(final ? { status: 'failed', error: message, finishedAt: new Date() } : { status: 'queued', error: `attempt ${attempt} failed, retrying: ${message}` })
      .where(mine);
    if (!final) throw err;
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
      try {
        await handleModeMapJob(o, { mapId: job.data.mapId, retryCount: job.retryCount, retryLimit: job.retryLimit });
        await o.boss.complete(MODE_MAP_QUEUE.name, job.id);
      } catch (err) {
        const message = err instanceof Error ? err.message : String(err);
        log(`map ${job.data.mapId} failed (attempt ${job.retryCount + 1}): ${message}`);
        await o.boss.fail(MODE_MAP_QUEUE.name, job.id, { message }).catch(() => {});
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
