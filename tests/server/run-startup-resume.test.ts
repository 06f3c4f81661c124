// Issue 10 item 6: runs the previous shutdown left running or queued are queued again by
// the first supervisor pass of a starting worker, at once (not after the 30 s stale-heartbeat
// rule) and with a neutral note. pg-boss for real, on the test database.
import { eq, sql } from 'drizzle-orm';
import type PgBoss from 'pg-boss';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { inlineCompute } from '../../server/compute/compute-pool.js';
import { connectDb, type DbHandle } from '../../server/db/client.js';
import { runs } from '../../server/db/schema/runs.js';
import { runQueue, startBoss } from '../../server/jobs/boss.js';
import { RUN_QUEUES } from '../../server/jobs/queues.js';
import { INTERRUPTED_NOTE, STARTUP_STALE_SECONDS, superviseRuns } from '../../server/jobs/supervisor.js';
import { runInThread } from '../../server/jobs/thread-runner.js';
import { startWorkerLoop } from '../../server/jobs/worker.js';
import { ModelService } from '../../server/models/model-service.js';
import { RunService } from '../../server/runs/run-service.js';
import { runStore } from '../../server/runs/run-store.js';
import { createLab, type Lab } from './lab-fixture.js';
import { testDatabaseUrl } from './test-app.js';
import { smallRectangle } from './fixtures/small-cavity.js';
import { waitFor } from './wait-for.js';

let handle: DbHandle;
let boss: PgBoss;
let lab: Lab;
let models: ModelService;
let runService: RunService;
const queue = RUN_QUEUES.transmission.name;
/** The everyday rule: a running run silent this long lost its worker. */
const stale = 30;

beforeAll(async () => {
  handle = connectDb(testDatabaseUrl(), 4);
  boss = await startBoss({ databaseUrl: testDatabaseUrl() });
  lab = await createLab(handle.db, ['designer']);
  models = new ModelService(handle.db, inlineCompute);
  runService = new RunService(handle.db, runQueue(boss), inlineCompute);
});
afterAll(async () => {
  await boss?.stop({ graceful: false, wait: true });
  await handle?.close();
});

async function runRow(id: string) {
  const [row] = await handle.db.select().from(runs).where(eq(runs.id, id));
  return row!;
}

/**
 * A transmission run as a worker of the previous process left it: its job fetched, attempt 1
 * running, last heartbeat `silentSeconds` ago (the process ended then).
 */
async function interruptedRun(name: string, silentSeconds: number) {
  const model = await models.create(lab.groupId, lab.as('designer').id, smallRectangle(name));
  const run = await runService.create(lab.groupId, lab.as('designer').id, {
    kind: 'transmission',
    modelId: model.id,
    window: { emin: 3, emax: 6, points: 20 },
  });
  const jobId = (await runRow(run.id)).jobId!;
  const [job] = await waitFor(
    'the job to be fetched',
    async () => {
      const jobs = await boss.fetch(queue, { batchSize: 1 });
      return jobs.length > 0 && jobs.some((j) => j.id === jobId) && jobs;
    },
    10,
  );
  expect(job!.id).toBe(jobId);
  expect(await runStore.startAttempt(handle.db, run.id, jobId)).toBe(1);
  await handle.db.execute(sql`update runs set heartbeat_at = now() - make_interval(secs => ${silentSeconds}) where id = ${run.id}`);
  return { runId: run.id, jobId };
}

describe('runs interrupted by the previous shutdown', () => {
  it('the start-up pass queues a silent run again at once with a neutral note; a run still beating is left alone', async () => {
    const silent = await interruptedRun('Interrupted A', STARTUP_STALE_SECONDS + 4);
    const beating = await interruptedRun('Still beating', 0);

    // The everyday pass leaves both: neither has been silent for `stale` seconds.
    expect(await superviseRuns({ db: handle.db, boss, staleAfterSeconds: stale, groupId: lab.groupId })).toMatchObject({ handedOn: 0, resent: 0, failed: 0 });
    expect((await runRow(silent.runId)).status).toBe('running');

    const logs: string[] = [];
    const report = await superviseRuns({ db: handle.db, boss, staleAfterSeconds: stale, groupId: lab.groupId, startup: true, log: (m) => logs.push(m) });
    expect(report).toMatchObject({ handedOn: 1, failed: 0 });
    expect(await runRow(silent.runId)).toMatchObject({ status: 'queued', attempt: 1, error: INTERRUPTED_NOTE, progressStage: 'queued again' });
    expect((await boss.getJobById(queue, silent.jobId))?.state).toBe('retry');
    expect(logs.join('\n')).not.toMatch(/stopped answering|worker lost/);
    expect(logs.join('\n')).toMatch(/previous shutdown/);
    // A worker still beating (another process) keeps its run.
    expect(await runRow(beating.runId)).toMatchObject({ status: 'running', attempt: 1, error: null });
    await runStore.fail(handle.db, beating.runId, 'test over');
  });

  it('a start-up pass leaves a run that beat after this process started, however late its next beat', async () => {
    // A loaded machine can delay a live attempt's heartbeat past the short start-up age; the
    // attempt began after the process did, so it is not left over from a shutdown.
    const late = await interruptedRun('Late beat', STARTUP_STALE_SECONDS + 4);
    const startedBefore = new Date(Date.now() - (STARTUP_STALE_SECONDS + 30) * 1000);
    const kept = await superviseRuns({ db: handle.db, boss, staleAfterSeconds: stale, groupId: lab.groupId, startup: true, processStartedAt: startedBefore });
    expect(kept).toMatchObject({ handedOn: 0 });
    expect((await runRow(late.runId)).status).toBe('running');
    // The same run seen by a process that started after its last beat is handed on.
    const handed = await superviseRuns({ db: handle.db, boss, staleAfterSeconds: stale, groupId: lab.groupId, startup: true, processStartedAt: new Date() });
    expect(handed).toMatchObject({ handedOn: 1 });
    expect((await runRow(late.runId)).status).toBe('queued');
    await runStore.fail(handle.db, late.runId, 'test over');
  });

  it('a starting worker resumes such a run in its first supervisor pass and completes it', async () => {
    const { runId } = await interruptedRun('Interrupted B', STARTUP_STALE_SECONDS + 4);
    const logs: string[] = [];
    const started = Date.now();
    // The everyday passes come only every 10 minutes here: only the start-up pass can hand the run on.
    const worker = startWorkerLoop({
      db: handle.db,
      boss,
      compute: runInThread,
      pollSeconds: 0.2,
      supervisorSeconds: 600,
      staleAfterSeconds: stale,
      log: (m) => logs.push(m),
    });
    try {
      const done = await waitFor(
        'the run to finish',
        async () => {
          const r = await runRow(runId);
          return ['completed', 'failed'].includes(r.status) && r;
        },
        60,
      );
      expect(done).toMatchObject({ status: 'completed', attempt: 2, error: null });
      // Well before the everyday rule would even have noticed it.
      expect((Date.now() - started) / 1000).toBeLessThan(stale);
      expect(logs.join('\n')).not.toMatch(/stopped answering|worker lost/);
    } finally {
      await worker.stop();
    }
  });
});
