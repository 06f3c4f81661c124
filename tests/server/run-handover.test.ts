// Defect 9 of issue 7, driven step by step: two workers stall in turn on one run,
// and the pg-boss job and the run's attempt must agree at every step. Workers run
// in this process with a gate on their computation and their heartbeat paused (a
// stalled process), and the supervisor is called by hand, so the interleaving is
// the same on every run of the test.
import { inlineCompute } from '../../server/compute/compute-pool.js';
import { and, count, eq, sql } from 'drizzle-orm';
import type PgBoss from 'pg-boss';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { connectDb, type DbHandle } from '../../server/db/client.js';
import { auditLog } from '../../server/db/schema/audit.js';
import { modeImages, resonances } from '../../server/db/schema/catalogue.js';
import { runs, spectra } from '../../server/db/schema/runs.js';
import { runQueue, startBoss } from '../../server/jobs/boss.js';
import { runEngineTask, type EngineTaskResult } from '../../server/jobs/engine-task.js';
import { RUN_QUEUES } from '../../server/jobs/queues.js';
import type { RunJobOutcome } from '../../server/jobs/run-job.js';
import { superviseRuns } from '../../server/jobs/supervisor.js';
import { startWorkerLoop } from '../../server/jobs/worker.js';
import { ModelService } from '../../server/models/model-service.js';
import { RunService } from '../../server/runs/run-service.js';
import { createLab, type Lab } from './lab-fixture.js';
import { testDatabaseUrl } from './test-app.js';
import { smallRectangle, smallWindow } from './fixtures/small-cavity.js';
import { waitFor } from './wait-for.js';

let handle: DbHandle;
let boss: PgBoss;
let lab: Lab;
let models: ModelService;
let runService: RunService;
let reference: EngineTaskResult;
const queue = RUN_QUEUES['pole-search'].name;
const stale = 2;

beforeAll(async () => {
  handle = connectDb(testDatabaseUrl(), 6);
  boss = await startBoss({ databaseUrl: testDatabaseUrl() });
  lab = await createLab(handle.db, ['designer']);
  models = new ModelService(handle.db, inlineCompute);
  runService = new RunService(handle.db, runQueue(boss), inlineCompute);
  reference = runEngineTask({ kind: 'pole-search', document: smallRectangle('Handover'), window: smallWindow, spectrumPoints: 400 });
});
afterAll(async () => {
  await boss?.stop({ graceful: false, wait: true });
  await handle?.close();
});

/** A worker whose computation waits for `release()` and whose heartbeat can be paused. */
function gatedWorker(name: string) {
  let open!: () => void;
  const gate = new Promise<void>((r) => (open = r));
  const outcomes: RunJobOutcome[] = [];
  let started = false;
  const state = { paused: false };
  const w = {
    get paused() {
      return state.paused;
    },
    set paused(v: boolean) {
      state.paused = v;
    },
    outcomes,
    get started() {
      return started;
    },
    release: () => open(),
    loop: startWorkerLoop({
      db: handle.db,
      boss,
      pollSeconds: 0.2,
      supervisorSeconds: 0,
      log: () => {},
      heartbeatPaused: (): boolean => state.paused,
      onOutcome: (_runId, outcome) => outcomes.push(outcome),
      compute: async () => {
        started = true;
        await gate;
        return reference;
      },
    }),
    name,
  };
  return w;
}

async function runRow(id: string) {
  const [row] = await handle.db.select().from(runs).where(eq(runs.id, id));
  return row!;
}

async function jobState(jobId: string) {
  return (await boss.getJobById(queue, jobId, { includeArchive: true }))?.state ?? 'missing';
}

/** Makes the run's heartbeat look old, as it would after `stale` seconds of silence, without the wait. */
async function ageHeartbeat(runId: string) {
  await handle.db.execute(sql`update runs set heartbeat_at = now() - interval '1 minute' where id = ${runId}`);
}

async function rowCounts(runId: string) {
  const [r] = await handle.db.select({ n: count() }).from(resonances).where(eq(resonances.runId, runId));
  const [s] = await handle.db.select({ n: count() }).from(spectra).where(eq(spectra.runId, runId));
  const [i] = await handle.db
    .select({ n: count() })
    .from(modeImages)
    .innerJoin(resonances, eq(resonances.id, modeImages.resonanceId))
    .where(eq(resonances.runId, runId));
  const [a] = await handle.db
    .select({ n: count() })
    .from(auditLog)
    .where(and(eq(auditLog.action, 'run.completed'), sql`${auditLog.details}->>'runId' = ${runId}`));
  return { resonances: r!.n, spectra: s!.n, images: i!.n, completedAudits: a!.n };
}

describe('a run handed between stalled workers (issue 7, defect 9)', () => {
  it('a stale attempt never ends the live job, and the run completes exactly once', async () => {
    const model = await models.create(lab.groupId, lab.as('designer').id, smallRectangle('Handover'));
    const run = await runService.create(lab.groupId, lab.as('designer').id, { kind: 'pole-search', modelId: model.id, window: smallWindow });
    const jobId = (await runRow(run.id)).jobId!;

    // Worker A takes the run and stalls.
    const a = gatedWorker('A');
    await waitFor('A to start computing', async () => a.started, 30);
    a.paused = true;
    await a.loop.stop(); // A finishes its current attempt but fetches nothing more
    expect(await runRow(run.id)).toMatchObject({ status: 'running', attempt: 1, jobId });

    // The supervisor notices A's silence and hands the run on.
    await ageHeartbeat(run.id);
    expect(await superviseRuns({ db: handle.db, boss, staleAfterSeconds: stale, groupId: lab.groupId })).toMatchObject({ handedOn: 1, resent: 0 });
    expect((await runRow(run.id)).status).toBe('queued');
    expect(await jobState(jobId)).toBe('retry');

    // Worker B takes the same job (pg-boss's retry) and computes.
    const b = gatedWorker('B');
    await waitFor('B to start computing', async () => b.started, 30);
    expect(await runRow(run.id)).toMatchObject({ status: 'running', attempt: 2, jobId });
    expect(await jobState(jobId)).toBe('active');

    // A wakes up with its results: it must write nothing and leave B's job active.
    a.release();
    await waitFor('A to end its attempt', async () => a.outcomes.length > 0, 30);
    expect(a.outcomes).toEqual(['superseded']);
    expect(await jobState(jobId)).toBe('active');
    expect(await runRow(run.id)).toMatchObject({ status: 'running', attempt: 2 });
    expect((await rowCounts(run.id)).resonances).toBe(0);

    // Now B stalls too; the supervisor must still find a live job to retry.
    b.paused = true;
    await b.loop.stop();
    await ageHeartbeat(run.id);
    expect(await superviseRuns({ db: handle.db, boss, staleAfterSeconds: stale, groupId: lab.groupId })).toMatchObject({ handedOn: 1, failed: 0 });
    expect(await jobState(jobId)).toBe('retry');

    // Worker C completes the run; B wakes up afterwards and changes nothing.
    const c = gatedWorker('C');
    c.release();
    await waitFor('C to complete the run', async () => c.outcomes.includes('completed'), 60);
    await c.loop.stop();
    b.release();
    await waitFor('B to end its attempt', async () => b.outcomes.length > 0, 30);
    expect(b.outcomes).toEqual(['superseded']);

    const done = await runRow(run.id);
    expect(done).toMatchObject({ status: 'completed', attempt: 3, error: null, resonanceCount: reference.poles.length });
    expect(await jobState(jobId)).toBe('completed');
    expect(await rowCounts(run.id)).toEqual({
      resonances: reference.poles.length,
      spectra: 1,
      images: 2 * reference.poles.length,
      completedAudits: 1,
    });
  });

  it('a stale attempt that fails after the hand-over does not fail the live job', async () => {
    const model = await models.create(lab.groupId, lab.as('designer').id, smallRectangle('Handover fail'));
    const run = await runService.create(lab.groupId, lab.as('designer').id, { kind: 'pole-search', modelId: model.id, window: smallWindow });
    const jobId = (await runRow(run.id)).jobId!;
    let failA!: (e: Error) => void;
    let aStarted = false;
    const outcomesA: RunJobOutcome[] = [];
    const a = startWorkerLoop({
      db: handle.db,
      boss,
      pollSeconds: 0.2,
      supervisorSeconds: 0,
      log: () => {},
      heartbeatPaused: () => true,
      onOutcome: (_r, o) => outcomesA.push(o),
      compute: () => {
        aStarted = true;
        return new Promise((_, reject) => (failA = reject));
      },
    });
    await waitFor('A to start', async () => aStarted, 30);
    await a.stop();
    await ageHeartbeat(run.id);
    await superviseRuns({ db: handle.db, boss, staleAfterSeconds: stale, groupId: lab.groupId });
    const b = gatedWorker('B');
    await waitFor('B to start computing', async () => b.started, 30);
    failA(new Error('lost connection to the thread'));
    await waitFor('A to end its attempt', async () => outcomesA.length > 0, 30);
    expect(outcomesA).toEqual(['superseded']);
    expect(await jobState(jobId)).toBe('active');
    const during = await runRow(run.id);
    expect(during).toMatchObject({ status: 'running', attempt: 2 });
    expect(during.error).toBeNull();
    b.release();
    await waitFor('B to complete', async () => b.outcomes.includes('completed'), 60);
    await b.loop.stop();
    expect(await runRow(run.id)).toMatchObject({ status: 'completed', attempt: 2 });
    expect(await jobState(jobId)).toBe('completed');
    expect((await rowCounts(run.id)).resonances).toBe(reference.poles.length);
  });

  it('a queued run whose job has ended, or that never got one, is sent again and completes once', async () => {
    const model = await models.create(lab.groupId, lab.as('designer').id, smallRectangle('Orphans'));
    // The state defect 9 left behind: the run waits in the queue, its job is completed.
    const orphan = await runService.create(lab.groupId, lab.as('designer').id, { kind: 'pole-search', modelId: model.id, window: smallWindow });
    const oldJob = (await runRow(orphan.id)).jobId!;
    const [fetched] = await boss.fetch(queue, { batchSize: 1 });
    expect(fetched!.id).toBe(oldJob);
    await boss.complete(queue, oldJob);
    // And a run whose API process died between the commit and the send: no job at all.
    const jobless = await runService.create(lab.groupId, lab.as('designer').id, { kind: 'pole-search', modelId: model.id, window: smallWindow });
    const lostJob = (await runRow(jobless.id)).jobId!;
    await boss.deleteJob(queue, lostJob);
    await handle.db.update(runs).set({ jobId: null }).where(eq(runs.id, jobless.id));

    // Young runs are left alone (their job may still be on its way).
    expect(await superviseRuns({ db: handle.db, boss, staleAfterSeconds: 3600, groupId: lab.groupId })).toMatchObject({ resent: 0 });
    await handle.db.execute(sql`update runs set created_at = now() - interval '1 minute' where id in (${orphan.id}, ${jobless.id})`);
    const report = await superviseRuns({ db: handle.db, boss, staleAfterSeconds: stale, groupId: lab.groupId });
    expect(report.resent).toBe(2);
    const newJob = (await runRow(orphan.id)).jobId!;
    expect(newJob).not.toBe(oldJob);
    expect(await jobState(newJob)).toBe('created');
    expect((await runRow(jobless.id)).jobId).not.toBeNull();

    const w = gatedWorker('W');
    w.release();
    await waitFor('both runs to complete', async () => w.outcomes.filter((o) => o === 'completed').length === 2, 90);
    await w.loop.stop();
    for (const id of [orphan.id, jobless.id]) {
      expect(await runRow(id)).toMatchObject({ status: 'completed', attempt: 1 });
      expect(await rowCounts(id)).toMatchObject({ resonances: reference.poles.length, spectra: 1, completedAudits: 1 });
    }
    // A second pass finds nothing more to do.
    expect(await superviseRuns({ db: handle.db, boss, staleAfterSeconds: stale, groupId: lab.groupId })).toEqual({ handedOn: 0, resent: 0, failed: 0 });
  });

  it('a run that keeps losing its job fails with a message once its attempts are used up', async () => {
    const model = await models.create(lab.groupId, lab.as('designer').id, smallRectangle('Used up'));
    const run = await runService.create(lab.groupId, lab.as('designer').id, { kind: 'pole-search', modelId: model.id, window: smallWindow });
    const jobId = (await runRow(run.id)).jobId!;
    await boss.cancel(queue, jobId);
    const limit = RUN_QUEUES['pole-search'].retryLimit;
    await handle.db.execute(sql`update runs set created_at = now() - interval '1 minute', attempt = ${limit + 1} where id = ${run.id}`);
    expect(await superviseRuns({ db: handle.db, boss, staleAfterSeconds: stale, groupId: lab.groupId })).toMatchObject({ failed: 1, resent: 0 });
    const failed = await runRow(run.id);
    expect(failed.status).toBe('failed');
    expect(failed.error).toMatch(/attempted 4 times without finishing; its queue job had cancelled/);
  });
});
