import { and, eq, sql } from 'drizzle-orm';
import type { Db } from '../db/client.js';
import { writeAudit } from '../audit/audit-log.js';
import { cavityModels, modelVersions } from '../db/schema/models.js';
import { runs } from '../db/schema/runs.js';
import type { EngineTask, EngineTaskResult } from './engine-task.js';
import { HEARTBEAT_SECONDS } from './queues.js';
import { writeRunResults, type RunContext } from './run-results.js';
import { EngineTaskCancelled, EngineTaskError } from './thread-runner.js';

/** Points of the spectrum a pole search also computes over its window (before refinement). */
export const POLE_SEARCH_SPECTRUM_POINTS = 400;

export interface RunJobDeps {
  db: Db;
  /** Computes the task; in production a worker thread (thread-runner.ts). */
  compute: (task: EngineTask, onProgress: (stage: string, fraction: number) => void, signal: AbortSignal) => Promise<EngineTaskResult>;
  heartbeatSeconds?: number;
  log?: (msg: string) => void;
}

export interface RunJobInfo {
  runId: string;
  retryCount: number;
  retryLimit: number;
}

async function notify(db: Db, runId: string) {
  await db.execute(sql`select pg_notify('run_events', ${runId})`);
}

/**
 * One attempt at a run. Claims the run (attempt + 1), computes in a thread while
 * beating the heartbeat and watching for cancellation, then writes the results
 * only if the attempt is still its own. Throws to let pg-boss retry a failure
 * that may pass (a crash, a lost connection); a bad model or a cancellation ends
 * the run without retry.
 */
export async function handleRunJob(deps: RunJobDeps, job: RunJobInfo): Promise<void> {
  const { db } = deps;
  const log = deps.log ?? (() => {});
  const [run] = await db.select().from(runs).where(eq(runs.id, job.runId));
  if (!run) return log(`run ${job.runId} no longer exists; dropping its job`);
  if (run.status === 'completed' || run.status === 'cancelled' || run.status === 'failed') return;
  if (run.cancelRequested) {
    await db.update(runs).set({ status: 'cancelled', finishedAt: new Date(), progressStage: 'cancelled' }).where(eq(runs.id, run.id));
    await notify(db, run.id);
    return;
  }
  const [claimed] = await db
    .update(runs)
    .set({
      status: 'running',
      attempt: sql`${runs.attempt} + 1`,
      startedAt: sql`coalesce(${runs.startedAt}, now())`,
      heartbeatAt: new Date(),
      progressStage: 'starting',
      progressFraction: 0,
      error: null,
    })
    .where(eq(runs.id, run.id))
    .returning({ attempt: runs.attempt });
  const attempt = claimed.attempt;
  await notify(db, run.id);

  const [mv] = await db
    .select({
      id: modelVersions.id,
      modelId: modelVersions.modelId,
      name: cavityModels.name,
      version: modelVersions.version,
      document: modelVersions.document,
      family: modelVersions.family,
      material: modelVersions.material,
      fieldT: modelVersions.fieldT,
      spacingNm: modelVersions.spacingNm,
      widthNm: modelVersions.widthNm,
      heightNm: modelVersions.heightNm,
      radiusNm: modelVersions.radiusNm,
      lengthNm: modelVersions.lengthNm,
    })
    .from(modelVersions)
    .innerJoin(cavityModels, eq(cavityModels.id, modelVersions.modelId))
    .where(eq(modelVersions.id, run.modelVersionId));
  const w = run.window;
  const task: EngineTask =
    run.kind === 'transmission'
      ? { kind: 'transmission', document: mv.document, window: { emin: w.emin, emax: w.emax, points: w.points } }
      : { kind: 'pole-search', document: mv.document, window: { emin: w.emin, emax: w.emax, gammaMax: w.gammaMax }, spectrumPoints: POLE_SEARCH_SPECTRUM_POINTS };

  const abort = new AbortController();
  let lastFraction = 0;
  let pending: { stage: string; fraction: number } | null = null;
  const onProgress = (stage: string, fraction: number) => {
    // Stages report their own fractions; the bar shown to the user never goes back.
    lastFraction = Math.max(lastFraction, Math.min(1, fraction));
    pending = { stage, fraction: lastFraction };
  };
  const beat = async () => {
    const p = pending;
    pending = null;
    const [row] = await db
      .update(runs)
      .set({ heartbeatAt: new Date(), ...(p ? { progressStage: p.stage, progressFraction: p.fraction } : {}) })
      .where(and(eq(runs.id, run.id), eq(runs.attempt, attempt)))
      .returning({ cancel: runs.cancelRequested });
    if (!row) abort.abort(); // another attempt took over this run
    else if (row.cancel) abort.abort();
    if (p) await notify(db, run.id);
  };
  const progressTimer = setInterval(() => void beat().catch((e) => log(`heartbeat failed: ${e.message}`)), Math.min(1000, (deps.heartbeatSeconds ?? HEARTBEAT_SECONDS) * 1000));

  let result: EngineTaskResult;
  try {
    result = await deps.compute(task, onProgress, abort.signal);
  } catch (err) {
    clearInterval(progressTimer);
    if (err instanceof EngineTaskCancelled) {
      await db
        .update(runs)
        .set({ status: 'cancelled', finishedAt: new Date(), progressStage: 'cancelled' })
        .where(and(eq(runs.id, run.id), eq(runs.attempt, attempt), eq(runs.cancelRequested, true)));
      await notify(db, run.id);
      return;
    }
    const message = err instanceof Error ? err.message : String(err);
    const final = (err instanceof EngineTaskError && err.invalidModel) || job.retryCount >= job.retryLimit;
    await db
      .update(runs)
      .set(final ? { status: 'failed', error: message, finishedAt: new Date() } : { status: 'queued', error: `attempt ${attempt} failed, retrying: ${message}` })
      .where(and(eq(runs.id, run.id), eq(runs.attempt, attempt)));
    await notify(db, run.id);
    if (final) {
      await writeAudit(db, { groupId: run.groupId, actorId: run.createdBy, action: 'run.failed', subject: `${mv.name} v${mv.version}`, details: { runId: run.id, error: message } });
      return;
    }
    throw err;
  }
  clearInterval(progressTimer);
  const ctx: RunContext = {
    runId: run.id,
    groupId: run.groupId,
    attempt,
    actorId: run.createdBy,
    model: { ...mv, id: mv.modelId, versionId: mv.id },
  };
  const written = await writeRunResults(db, ctx, result);
  if (!written) log(`run ${run.id}: attempt ${attempt} was superseded; its results were discarded`);
}
