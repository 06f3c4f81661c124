/**
 * Computes study steps from the study-step queue, one at a time per process, each
 * in a worker thread (study-step-runner.ts). Runs in every worker process beside the
 * run, map and fit workers (server/jobs/worker-main.ts), so `npm run worker` on more
 * machines against the same PostgreSQL adds capacity with no other change.
 *
 * One attempt at a step: claim it (attempt + 1) unless it has ended; reuse the stored
 * search of an identical step (same model, window, options, engine version) or compute
 * it; then write the step's end only while the attempt is still its own. A worker that
 * dies leaves its job active until it expires; pg-boss then hands it to another worker,
 * whose claim makes the old attempt's late write (if it ever comes) change nothing.
 * When the last step ends, the study's outcome is assembled (study-assembly.ts) under a
 * row lock, once.
 */
import { hostname } from 'node:os';
import { and, eq, inArray, sql } from 'drizzle-orm';
import type PgBoss from 'pg-boss';
import type { Db } from '../db/client.js';
import { studies, studySteps, studyStepResults } from '../db/schema/studies.js';
import { STUDY_STEP_QUEUE } from '../jobs/queues.js';
import { ENGINE_VERSION } from '../jobs/engine-task.js';
import { assembleOutcome, type EndedStep } from './study-assembly.js';
import type { StudyStepJobData } from './study-queue.js';
import { runStudyStepInThread, StudyStepError } from './study-step-runner.js';
import { stepDocument, stepResultKey, type StudyDefinitionStored, type StudyStepOutput, type StudyStepTask } from './study-step-task.js';
import type { StoredSearch } from './step-codec.js';
import type { StepTransmission } from '../../shared/engine/study/study-transmission.js';

export interface StudyWorkerOptions {
  db: Db;
  boss: PgBoss;
  compute?: (task: StudyStepTask, signal: AbortSignal) => Promise<StudyStepOutput>;
  pollSeconds?: number;
  log?: (msg: string) => void;
}

export type StudyStepOutcome = 'completed' | 'failed' | 'cancelled' | 'retry' | 'superseded' | 'skipped' | 'assembled';

const ENDED = ['completed', 'failed', 'cancelled'];

async function notify(db: Db, studyId: string) {
  await db.execute(sql`select pg_notify('study_events', ${studyId})`).catch(() => {});
}

export async function handleStudyStepJob(
  o: Pick<StudyWorkerOptions, 'db' | 'compute' | 'log'>,
  job: { studyId: string; index: number; retryCount: number; retryLimit: number },
): Promise<StudyStepOutcome> {
  const { db } = o;
  const [study] = await db.select().from(studies).where(eq(studies.id, job.studyId));
  if (!study) return 'skipped';
  if (job.index < 0) return (await finishStudy(db, study.id)) ? 'assembled' : 'skipped';
  const [step] = await db
    .select()
    .from(studySteps)
    .where(and(eq(studySteps.studyId, study.id), eq(studySteps.index, job.index)));
  if (!step || ENDED.includes(step.status)) return 'skipped';
  if (study.cancelRequested) {
    await db
      .update(studySteps)
      .set({ status: 'cancelled', finishedAt: new Date() })
      .where(and(eq(studySteps.studyId, study.id), eq(studySteps.index, job.index), eq(studySteps.attempt, step.attempt)));
    await finishStudy(db, study.id);
    return 'cancelled';
  }
  const [claimed] = await db
    .update(studySteps)
    .set({ status: 'running', attempt: step.attempt + 1, startedAt: new Date(), worker: `${hostname()}:${process.pid}`, error: null })
    .where(
      and(
        eq(studySteps.studyId, study.id),
        eq(studySteps.index, job.index),
        eq(studySteps.attempt, step.attempt),
        inArray(studySteps.status, ['queued', 'running']),
      ),
    )
    .returning({ attempt: studySteps.attempt });
  if (!claimed) return 'superseded';
  const mine = and(eq(studySteps.studyId, study.id), eq(studySteps.index, job.index), eq(studySteps.attempt, claimed.attempt));
  if (study.status === 'queued')
    await db
      .update(studies)
      .set({ status: 'running' })
      .where(and(eq(studies.id, study.id), eq(studies.status, 'queued')));
  await notify(db, study.id);

  const definition = study.definition as unknown as StudyDefinitionStored;
  const controller = new AbortController();
  const watch = setInterval(() => {
    void db
      .select({ cancel: studies.cancelRequested })
      .from(studies)
      .where(eq(studies.id, study.id))
      .then(([r]) => {
        if (r?.cancel) controller.abort();
      })
      .catch(() => {});
  }, 1000);
  try {
    let key: string | null = null;
    let reuse: StoredSearch | null = null;
    let reuseTransmission: StepTransmission | null = null;
    try {
      const { model } = stepDocument(definition, job.index);
      key = stepResultKey(definition, model);
      const [stored] = await db
        .select({ search: studyStepResults.search, transmission: studyStepResults.transmission })
        .from(studyStepResults)
        .where(eq(studyStepResults.key, key));
      reuse = (stored?.search as unknown as StoredSearch | undefined) ?? null;
      reuseTransmission = (stored?.transmission as unknown as StepTransmission | null | undefined) ?? null;
    } catch {
      key = null; // an invalid realised model: the thread reports it
    }
    const output = await (o.compute ?? runStudyStepInThread)({ definition, index: job.index, reuse, reuseTransmission }, controller.signal);
    const transmission = output.transmissionComputed && output.transmission ? (output.transmission as unknown as Record<string, unknown>) : null;
    const ended = await db.transaction(async (tx) => {
      if (output.search && key && !reuse) {
        await tx
          .insert(studyStepResults)
          .values({ key, engineVersion: ENGINE_VERSION, search: output.search as unknown as Record<string, unknown>, transmission })
          .onConflictDoNothing();
      } else if (key && transmission) {
        // A stored step computed without a map, or with another column count: the map row is added to it.
        await tx.update(studyStepResults).set({ transmission }).where(eq(studyStepResults.key, key));
      }
      return tx
        .update(studySteps)
        .set({
          status: output.search ? 'completed' : 'failed',
          resultKey: output.search ? key : null,
          reused: reuse !== null,
          continuation: output.continuation as unknown as Record<string, unknown> | null,
          record: output.record,
          error: output.invalid,
          seconds: output.seconds,
          finishedAt: new Date(),
        })
        .where(mine)
        .returning({ index: studySteps.index });
    });
    if (ended.length === 0) return 'superseded';
    await notify(db, study.id);
    await finishStudy(db, study.id);
    return output.search ? 'completed' : 'failed';
  } catch (err) {
    const message = err instanceof Error ? err.message : String(err);
    if (controller.signal.aborted) {
      await db.update(studySteps).set({ status: 'cancelled', finishedAt: new Date() }).where(mine);
      await finishStudy(db, study.id);
      return 'cancelled';
    }
    const final = (err instanceof StudyStepError && err.invalidModel) || job.retryCount >= job.retryLimit;
    await db
      .update(studySteps)
      .set(
        final
          ? { status: 'failed', error: message, finishedAt: new Date() }
          : { status: 'queued', error: `attempt ${claimed.attempt} failed, retrying: ${message}` },
      )
      .where(mine);
    if (final) {
      await finishStudy(db, study.id);
      return 'failed';
    }
    throw err;
  } finally {
    clearInterval(watch);
  }
}

/**
 * Ends the study when no step is queued or running: assembles the outcome from the
 * ended steps and sets the status (cancelled when asked, failed when no step
 * completed, else completed). Under a row lock, so two workers ending the last two
 * steps assemble it once. Returns true when this call ended it.
 */
export async function finishStudy(db: Db, studyId: string): Promise<boolean> {
  return db.transaction(async (tx) => {
    const [study] = await tx.select().from(studies).where(eq(studies.id, studyId)).for('update');
    if (!study || study.outcome !== null || study.finishedAt !== null) return false;
    const counts = await tx
      .select({ status: studySteps.status, n: sql<number>`count(*)::int` })
      .from(studySteps)
      .where(eq(studySteps.studyId, studyId))
      .groupBy(studySteps.status);
    const n = (s: string) => counts.find((c) => c.status === s)?.n ?? 0;
    if (n('queued') + n('running') > 0) return false;
    const rows = await tx
      .select({
        index: studySteps.index,
        status: studySteps.status,
        search: studyStepResults.search,
        transmission: studyStepResults.transmission,
        continuation: studySteps.continuation,
        record: studySteps.record,
        error: studySteps.error,
      })
      .from(studySteps)
      .leftJoin(studyStepResults, eq(studyStepResults.key, studySteps.resultKey))
      .where(eq(studySteps.studyId, studyId));
    const ended: EndedStep[] = rows.map((r) => ({
      index: r.index,
      status: r.status,
      search: r.status === 'completed' ? ((r.search as unknown as EndedStep['search']) ?? null) : null,
      continuation: r.status === 'completed' ? ((r.continuation as unknown as EndedStep['continuation']) ?? null) : null,
      transmission: r.status === 'completed' ? ((r.transmission as unknown as EndedStep['transmission']) ?? null) : null,
      record: r.record ?? null,
      error: r.error,
    }));
    let outcome: Record<string, unknown> | null = null;
    let error: string | null = null;
    try {
      outcome = assembleOutcome(study.definition as unknown as StudyDefinitionStored, ended);
    } catch (err) {
      error = `the study's steps could not be assembled: ${err instanceof Error ? err.message : String(err)}`;
    }
    const status = study.cancelRequested ? 'cancelled' : n('completed') === 0 || error ? 'failed' : 'completed';
    if (!error && n('failed') > 0) error = `${n('failed')} of ${study.stepCount} steps failed; the others are kept`;
    await tx.update(studies).set({ status, outcome, error, finishedAt: new Date() }).where(eq(studies.id, studyId));
    await tx.execute(sql`select pg_notify('study_events', ${studyId})`);
    return true;
  });
}

/** Polls the study-step queue; returns a stop function. */
export function startStudyWorker(o: StudyWorkerOptions): { stop: () => Promise<void> } {
  const log = o.log ?? ((m) => console.log(`[studies ${process.pid}] ${m}`));
  let stopped = false;
  const loop = (async () => {
    while (!stopped) {
      const [job] = (await o.boss.fetch<StudyStepJobData>(STUDY_STEP_QUEUE.name, { batchSize: 1, includeMetadata: true }).catch((e) => {
        log(`fetch failed: ${e.message}`);
        return [];
      })) as PgBoss.JobWithMetadata<StudyStepJobData>[];
      if (!job) {
        await new Promise((r) => setTimeout(r, (o.pollSeconds ?? 1) * 1000));
        continue;
      }
      try {
        await handleStudyStepJob(o, { studyId: job.data.studyId, index: job.data.index, retryCount: job.retryCount, retryLimit: job.retryLimit });
        await o.boss.complete(STUDY_STEP_QUEUE.name, job.id).catch(() => {});
      } catch (err) {
        const message = err instanceof Error ? err.message : String(err);
        log(`study ${job.data.studyId} step ${job.data.index} failed (attempt ${job.retryCount + 1}): ${message}`);
        await o.boss.fail(STUDY_STEP_QUEUE.name, job.id, { message }).catch(() => {});
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
