import { eq } from 'drizzle-orm';
import type { Db, Queryable } from '../db/client.js';
import { writeAudit } from '../audit/audit-log.js';
import { cavityModels, modelVersions } from '../db/schema/models.js';
import { runs } from '../db/schema/runs.js';
import { runStore } from '../runs/run-store.js';
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
  /** Fault tests only: while this answers true the attempt beats no heartbeat, as a stalled process would. */
  heartbeatPaused?: () => boolean;
  /** Told once a run has ended for good (completed, or failed after its last try); e.g. to e-mail its owner. Must not throw. */
  onEnded?: (runId: string, outcome: 'completed' | 'failed') => Promise<void>;
}

/**
 * Ends the queue job of this delivery inside `tx`, the transaction that wrote the
 * run's end, so a job is completed or failed only by the attempt that still owns
 * its run (worker.ts passes pg-boss through boss-in-transaction.ts).
 */
export type JobSettler = (tx: Queryable, how: 'complete' | 'fail', output: Record<string, unknown>) => Promise<void>;

interface RunJobInfo {
  runId: string;
  retryCount: number;
  retryLimit: number;
  /** The pg-boss job delivering this attempt; absent when a test calls the handler directly. */
  jobId?: string;
  settle?: JobSettler;
}

/**
 * How an attempt ended. `superseded`: another attempt owns the run (this one was
 * handed over while it stalled); it wrote nothing and left the job alone.
 */
export type RunJobOutcome = 'completed' | 'failed' | 'cancelled' | 'retry' | 'superseded' | 'skipped';

const notSettled: JobSettler = async () => {};

/**
 * One attempt at a run. Claims the run (attempt + 1, job id), computes in a thread
 * while beating the heartbeat and watching for cancellation, then writes the end
 * of the run (results, failure, cancellation) only while the attempt is still its
 * own, and settles the queue job in the same transaction. A failure that may pass
 * (a crash, a lost connection) fails the job so pg-boss retries it; a bad model, a
 * cancellation or the last attempt end the run. A stale attempt changes nothing.
 */
export async function handleRunJob(deps: RunJobDeps, job: RunJobInfo): Promise<RunJobOutcome> {
  const { db } = deps;
  const log = deps.log ?? (() => {});
  const settle = job.settle ?? notSettled;
  const [run] = await db.select().from(runs).where(eq(runs.id, job.runId));
  if (!run) {
    log(`run ${job.runId} no longer exists; dropping its job`);
    await settle(db, 'complete', { dropped: 'the run no longer exists' });
    return 'skipped';
  }
  if (run.status === 'completed' || run.status === 'cancelled' || run.status === 'failed') {
    await settle(db, 'complete', { dropped: `the run had already ${run.status}` });
    return 'skipped';
  }
  if (run.cancelRequested) {
    await db.transaction(async (tx) => {
      await runStore.cancelled(tx, run.id);
      await settle(tx, 'complete', { cancelled: true });
    });
    return 'cancelled';
  }
  const attempt = await runStore.startAttempt(db, run.id, job.jobId);
  if (attempt === null) {
    log(`run ${run.id}: not claimed (it ended, or another job of it is live); dropping job ${job.jobId ?? ''}`);
    await settle(db, 'complete', { dropped: 'the run ended or has another live job' });
    return 'skipped';
  }
  let subject = `run ${run.id}`;

  /** Writes the end of a failed or cancelled attempt, if the attempt still owns the run. */
  const endWithError = async (err: unknown): Promise<RunJobOutcome> => {
    if (err instanceof EngineTaskCancelled) {
      const ended = await db.transaction(async (tx) => {
        const done = await runStore.cancelled(tx, run.id, attempt);
        if (done) await settle(tx, 'complete', { cancelled: true });
        return done;
      });
      return ended ? 'cancelled' : 'superseded';
    }
    const message = err instanceof Error ? err.message : String(err);
    const final = (err instanceof EngineTaskError && err.invalidModel) || job.retryCount >= job.retryLimit || attempt > job.retryLimit;
    const ended = await db.transaction(async (tx) => {
      const owned = final
        ? await runStore.fail(tx, run.id, message, attempt)
        : await runStore.retry(tx, run.id, attempt, `attempt ${attempt} failed, retrying: ${message}`);
      if (!owned) return false;
      if (final) {
        await writeAudit(tx, { groupId: run.groupId, actorId: run.createdBy, action: 'run.failed', subject, details: { runId: run.id, error: message } });
        await settle(tx, 'complete', { failed: message });
      } else {
        await settle(tx, 'fail', { message });
      }
      return true;
    });
    if (!ended) return 'superseded';
    log(`run ${run.id} failed (attempt ${attempt}${final ? ', final' : ', will be retried'}): ${message}`);
    if (final) await deps.onEnded?.(run.id, 'failed');
    return final ? 'failed' : 'retry';
  };

  const abort = new AbortController();
  let lastFraction = 0;
  let pending: { stage: string; fraction: number } | null = null;
  const onProgress = (stage: string, fraction: number) => {
    // Stages report their own fractions; the bar shown to the user never goes back.
    lastFraction = Math.max(lastFraction, Math.min(1, fraction));
    pending = { stage, fraction: lastFraction };
  };
  const beat = async () => {
    if (deps.heartbeatPaused?.()) return;
    const p = pending;
    pending = null;
    const row = await runStore.beat(db, run.id, attempt, p);
    if (!row)
      abort.abort(); // another attempt took over this run, or the supervisor gave it up
    else if (row.cancelRequested) abort.abort();
  };
  const progressTimer = setInterval(
    () => void beat().catch((e) => log(`heartbeat failed: ${e.message}`)),
    Math.min(1000, (deps.heartbeatSeconds ?? HEARTBEAT_SECONDS) * 1000),
  );

  let result: EngineTaskResult;
  let ctx: RunContext;
  try {
    const [mv] = await db
      .select({
        id: modelVersions.id,
        modelId: modelVersions.modelId,
        name: cavityModels.name,
        version: modelVersions.version,
        document: modelVersions.document,
        family: modelVersions.family,
        physics: modelVersions.physics,
        material: modelVersions.material,
        fieldT: modelVersions.fieldT,
        spacingNm: modelVersions.spacingNm,
        widthNm: modelVersions.widthNm,
        heightNm: modelVersions.heightNm,
        radiusNm: modelVersions.radiusNm,
        lengthNm: modelVersions.lengthNm,
        rxNm: modelVersions.rxNm,
        ryNm: modelVersions.ryNm,
        innerNm: modelVersions.innerNm,
        outerNm: modelVersions.outerNm,
        areaNm2: modelVersions.areaNm2,
      })
      .from(modelVersions)
      .innerJoin(cavityModels, eq(cavityModels.id, modelVersions.modelId))
      .where(eq(modelVersions.id, run.modelVersionId));
    subject = `${mv.name} v${mv.version}`;
    const w = run.window;
    const task: EngineTask =
      run.kind === 'transmission'
        ? { kind: 'transmission', document: mv.document, window: { emin: w.emin, emax: w.emax, points: w.points } }
        : {
            kind: 'pole-search',
            document: mv.document,
            window: { emin: w.emin, emax: w.emax, gammaMax: w.gammaMax },
            spectrumPoints: POLE_SEARCH_SPECTRUM_POINTS,
          };
    ctx = {
      runId: run.id,
      groupId: run.groupId,
      attempt,
      actorId: run.createdBy,
      model: { ...mv, id: mv.modelId, versionId: mv.id },
    };
    result = await deps.compute(task, onProgress, abort.signal);
  } catch (err) {
    clearInterval(progressTimer);
    return endWithError(err);
  }
  clearInterval(progressTimer);
  let written: boolean;
  try {
    written = await writeRunResults(db, ctx, result, (tx) => settle(tx, 'complete', { resonances: result.poles.length }));
  } catch (err) {
    return endWithError(err);
  }
  if (!written) {
    log(`run ${run.id}: attempt ${attempt} was superseded; its results were discarded and its job left to the live attempt`);
    return 'superseded';
  }
  await deps.onEnded?.(run.id, 'completed');
  return 'completed';
}
