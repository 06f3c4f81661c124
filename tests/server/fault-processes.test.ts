// Fault tests of issue 7 (defect 8 and the fault list): the app runs as `npm start`
// runs it (scripts/serve.ts), and its processes, or PostgreSQL itself, are killed in
// the middle of a run. Each test ends with the run completed exactly once: the rows
// of the run are counted (resonances, mode images, spectrum, completion audit).
import { and, count, eq, sql } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { connectDb, type DbHandle } from '../../server/db/client.js';
import { auditLog } from '../../server/db/schema/audit.js';
import { modeImages, resonances } from '../../server/db/schema/catalogue.js';
import { runs, spectra } from '../../server/db/schema/runs.js';
import { migrate } from '../../scripts/migrate.js';
import { startAppProcess, type AppProcess } from './app-process.js';
import { freePort } from './free-port.js';
import { createLab, type Lab } from './lab-fixture.js';
import type { SignedIn } from './sign-in-as.js';
import { testDatabaseUrl } from './test-app.js';
import { startThrowawayPostgres, type ThrowawayPostgres } from './throwaway-postgres.js';
import { smallRectangle, smallWindow } from './fixtures/small-cavity.js';
import { waitFor } from './wait-for.js';

async function launchRun(user: SignedIn, lab: Lab, name: string): Promise<string> {
  const model = await user.post(`/api/groups/${lab.groupId}/models`, { document: smallRectangle(name) });
  expect(model.status).toBe(201);
  const run = await user.post(`/api/groups/${lab.groupId}/runs`, { kind: 'pole-search', modelId: model.body.id, window: smallWindow });
  expect(run.status).toBe(201);
  return run.body.id as string;
}

async function runRow(h: DbHandle, id: string) {
  const [row] = await h.db.select().from(runs).where(eq(runs.id, id));
  return row!;
}

async function waitRunning(h: DbHandle, id: string) {
  await waitFor(
    'the run to be computing',
    async () => {
      const r = await runRow(h, id).catch(() => null);
      // A small run can finish within a second on a quiet machine: running is enough, and a run
      // that already finished is said plainly instead of waiting for a state that has passed.
      if (r?.status === 'completed') throw new Error('the run finished before the fault could be injected: make it larger');
      return r?.status === 'running';
    },
    120,
  );
}

async function waitFinished(h: DbHandle, id: string, seconds = 150) {
  return waitFor(
    'the run to finish',
    async () => {
      const r = await runRow(h, id).catch(() => null);
      return r && ['completed', 'failed', 'cancelled'].includes(r.status) && r;
    },
    seconds,
  );
}

/** The rows one completed run must own exactly once. */
async function expectCompletedOnce(h: DbHandle, lab: Lab, id: string) {
  const run = await runRow(h, id);
  expect(run.status).toBe('completed');
  expect(run.error).toBeNull();
  const n = run.resonanceCount!;
  expect(n).toBeGreaterThan(0);
  const rows = await h.db.select({ idx: resonances.idx }).from(resonances).where(eq(resonances.runId, id));
  expect(rows.length).toBe(n);
  expect(new Set(rows.map((r) => r.idx)).size).toBe(n);
  const [images] = await h.db
    .select({ n: count() })
    .from(modeImages)
    .innerJoin(resonances, eq(resonances.id, modeImages.resonanceId))
    .where(eq(resonances.runId, id));
  expect(images!.n).toBe(2 * n);
  const [spectrum] = await h.db.select({ n: count() }).from(spectra).where(eq(spectra.runId, id));
  expect(spectrum!.n).toBe(1);
  const [audits] = await h.db
    .select({ n: count() })
    .from(auditLog)
    .where(and(eq(auditLog.action, 'run.completed'), sql`${auditLog.details}->>'runId' = ${id}`));
  expect(audits!.n).toBe(1);
  const [groupRuns] = await h.db.select({ n: count() }).from(runs).where(eq(runs.groupId, lab.groupId));
  return { runsOfGroup: groupRuns!.n, attempts: run.attempt };
}

describe('the app under its supervisor (npm start)', () => {
  let handle: DbHandle;
  let app: AppProcess;
  let lab: Lab;
  let designer: SignedIn;

  beforeAll(async () => {
    handle = connectDb(testDatabaseUrl(), 2);
    lab = await createLab(handle.db, ['designer']);
    app = await startAppProcess(testDatabaseUrl(), 1);
    designer = await app.signIn(lab.as('designer').email);
  }, 180_000);
  afterAll(async () => {
    await app?.stop();
    await handle?.close();
  });

  it('a worker killed with SIGKILL is restarted, the API keeps serving, and the run completes once', async () => {
    const runId = await launchRun(designer, lab, 'Killed worker');
    await waitRunning(handle, runId);
    const first = app.childPid('worker-main.ts')!;
    process.kill(first, 'SIGKILL');
    // The API answers at once: it does not depend on the worker.
    expect(await app.health()).toBe(200);
    expect((await designer.get(`/api/groups/${lab.groupId}/runs/${runId}`)).status).toBe(200);
    await waitFor(
      'the supervisor to log the death and the restart',
      async () => /worker 1 \(pid \d+\) stopped \(signal SIGKILL\) after [\d.]+ s; restarting in 0\.5 s/.test(app.output()),
      30,
    );
    const second = await waitFor(
      'a new worker process',
      async () => {
        const pid = app.childPid('worker-main.ts');
        return pid !== undefined && pid !== first && pid;
      },
      30,
    );
    expect(second).not.toBe(first);
    const done = await waitFinished(handle, runId);
    expect(done.status).toBe('completed');
    const { runsOfGroup, attempts } = await expectCompletedOnce(handle, lab, runId);
    expect(runsOfGroup).toBe(1);
    expect(attempts).toBeGreaterThanOrEqual(2);
  }, 240_000);

  it('the API killed with SIGKILL is restarted on the same port and nothing is lost', async () => {
    const runId = await launchRun(designer, lab, 'Killed API');
    const api = app.childPid('server/main.ts')!;
    process.kill(api, 'SIGKILL');
    await waitFor('the supervisor to log the API restart', async () => /api \(pid \d+\) stopped \(signal SIGKILL\)/.test(app.output()), 30);
    await waitFor('the API to answer again', async () => (await app.health()) === 200, 60);
    expect(app.childPid('server/main.ts')).not.toBe(api);
    // The session survives the restart (it is in the database), and so does the run.
    const done = await waitFinished(handle, runId);
    expect(done.status).toBe('completed');
    const view = await designer.get(`/api/groups/${lab.groupId}/runs/${runId}`);
    expect(view.status).toBe(200);
    expect(view.body.status).toBe('completed');
    const { runsOfGroup } = await expectCompletedOnce(handle, lab, runId);
    expect(runsOfGroup).toBe(2);
  }, 240_000);

  it('SIGINT (Ctrl-C) stops the API and every worker, and restarts nothing', async () => {
    const pids = [app.childPid('server/main.ts')!, app.childPid('worker-main.ts')!];
    await app.stop();
    expect(app.process.signalCode ?? app.process.exitCode).toBe(0);
    for (const pid of pids) expect(() => process.kill(pid, 0)).toThrow();
    const at = app.output().indexOf('stopping the API and the workers');
    expect(at).toBeGreaterThanOrEqual(0);
    const afterStop = app.output().slice(at);
    expect(afterStop).not.toMatch(/restarting in/);
  }, 60_000);
});

describe("PostgreSQL restarted in the middle of a run (a server of the test's own)", () => {
  let pg: ThrowawayPostgres;
  let handle: DbHandle;
  let app: AppProcess;
  let lab: Lab;

  beforeAll(async () => {
    pg = startThrowawayPostgres(await freePort());
    pg.createDatabase('poleward_fault');
    await migrate(pg.url('poleward_fault'));
    handle = connectDb(pg.url('poleward_fault'), 2);
    lab = await createLab(handle.db, ['designer']);
    app = await startAppProcess(pg.url('poleward_fault'), 1);
  }, 180_000);
  afterAll(async () => {
    await app?.stop();
    await handle?.close().catch(() => {});
    pg?.destroy();
  });

  it('the API answers 503 with a retry hint during the outage, and the run completes once after it', async () => {
    const designer = await app.signIn(lab.as('designer').email);
    const runId = await launchRun(designer, lab, 'Database restart');
    await waitRunning(handle, runId);
    pg.stop();
    const during = await designer.get(`/api/groups/${lab.groupId}/runs/${runId}`);
    expect(during.status).toBe(503);
    expect(during.body.code).toBe('database_unavailable');
    expect(during.body.message).toMatch(/database cannot be reached/);
    expect(Number(during.headers['retry-after'])).toBeGreaterThan(0);
    // The processes ride out the outage: nobody had to restart them.
    const api = app.childPid('server/main.ts');
    await new Promise((r) => setTimeout(r, 3000));
    pg.start();
    await waitFor('the API to read the run again', async () => (await designer.get(`/api/groups/${lab.groupId}/runs/${runId}`)).status === 200, 60);
    expect(app.childPid('server/main.ts')).toBe(api);
    const done = await waitFinished(handle, runId, 180);
    expect(done.status).toBe('completed');
    const { runsOfGroup } = await expectCompletedOnce(handle, lab, runId);
    expect(runsOfGroup).toBe(1);
  }, 300_000);
});
