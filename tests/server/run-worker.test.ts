// The queue and the workers for real: pg-boss on the test database, the engine in a
// worker thread, and a worker process killed in the middle of a run.
import { spawn, type ChildProcess } from 'node:child_process';
import { and, count, eq } from 'drizzle-orm';
import type PgBoss from 'pg-boss';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { connectDb, type DbHandle } from '../../server/db/client.js';
import { modeImages, resonances } from '../../server/db/schema/catalogue.js';
import { runs, spectra } from '../../server/db/schema/runs.js';
import { runQueue, startBoss } from '../../server/jobs/boss.js';
import { endLeftoverRuns } from './fixtures/run-queues.js';
import { runEngineTask } from '../../server/jobs/engine-task.js';
import { handleRunJob } from '../../server/jobs/run-job.js';
import { runInThread } from '../../server/jobs/thread-runner.js';
import { runPartitioned } from '../../server/jobs/partitioned-run.js';
import { startWorkerLoop } from '../../server/jobs/worker.js';
import { inlineCompute } from '../../server/compute/compute-pool.js';
import { ModelService } from '../../server/models/model-service.js';
import { RunService } from '../../server/runs/run-service.js';
import { projectRoot } from '../../server/config.js';
import { hoppingEnergy } from '../../shared/units/constants.js';
import { createLab, type Lab } from './lab-fixture.js';
import { testDatabaseUrl } from './test-app.js';
import { smallRectangle, smallWindow } from './fixtures/small-cavity.js';

let handle: DbHandle;
let boss: PgBoss;
let lab: Lab;
let models: ModelService;
let runService: RunService;
const children: ChildProcess[] = [];

beforeAll(async () => {
  handle = connectDb(testDatabaseUrl(), 4);
  boss = await startBoss({ databaseUrl: testDatabaseUrl() });
  await endLeftoverRuns(handle.db, boss);
  lab = await createLab(handle.db, ['designer']);
  models = new ModelService(handle.db, inlineCompute);
  runService = new RunService(handle.db, runQueue(boss), inlineCompute);
});
afterAll(async () => {
  for (const c of children) if (c.exitCode === null) c.kill('SIGKILL');
  await boss?.stop({ graceful: false, wait: true });
  await handle?.close();
});

async function runRow(id: string) {
  const [row] = await handle.db.select().from(runs).where(eq(runs.id, id));
  return row!;
}

async function waitFor<T>(what: string, probe: () => Promise<T | null | undefined | false>, seconds: number): Promise<T> {
  const until = Date.now() + seconds * 1000;
  for (;;) {
    const v = await probe();
    if (v) return v;
    if (Date.now() > until) throw new Error(`timed out after ${seconds} s waiting for ${what}`);
    await new Promise((r) => setTimeout(r, 250));
  }
}

async function resonanceCount(runId: string) {
  const [{ n }] = await handle.db.select({ n: count() }).from(resonances).where(eq(resonances.runId, runId));
  return n;
}

function startWorkerProcess(): ChildProcess {
  // node itself with tsx's loader (not the tsx wrapper, whose child a SIGKILL would orphan).
  const child = spawn(process.execPath, ['--import', 'tsx', 'server/jobs/worker-main.ts'], {
    cwd: projectRoot,
    env: { ...process.env, DATABASE_URL: testDatabaseUrl(), POLEWARD_RUN_STALE_SECONDS: '4', NODE_ENV: 'test' },
    stdio: ['ignore', 'ignore', 'inherit'],
  });
  children.push(child);
  return child;
}

describe('runs on the queue', () => {
  // First in the file: the in-process worker loops of the tests below stop without waiting, and
  // one still polling could take this run's job before the worker process does.
  it('a run whose worker process is killed is retried and completes with the same resonances, no duplicates', async () => {
    const document = smallRectangle('Crash test');
    const model = await models.create(lab.groupId, lab.as('designer').id, document);
    // Reference: the same computation done directly in this process.
    const reference = runEngineTask({ kind: 'pole-search', document, window: smallWindow, spectrumPoints: 400 });
    const run = await runService.create(lab.groupId, lab.as('designer').id, { kind: 'pole-search', modelId: model.id, window: smallWindow });

    const first = startWorkerProcess();
    await waitFor(
      'the first worker to start computing',
      async () => {
        const r = await runRow(run.id);
        // The small run takes about 2 s on a quiet machine: kill as soon as an attempt runs, and
        // say so plainly if it finished before it could be seen running.
        if (r.status === 'completed') throw new Error('the run finished before the worker could be killed: make it larger');
        return r.status === 'running' && r;
      },
      60,
    );
    first.kill('SIGKILL');
    await new Promise((r) => first.once('exit', r));
    expect((await runRow(run.id)).status).toBe('running'); // nobody has noticed yet

    startWorkerProcess();
    const done = await waitFor(
      'the retried run to finish',
      async () => {
        const r = await runRow(run.id);
        return ['completed', 'failed'].includes(r.status) && r;
      },
      150,
    );
    expect(done.status).toBe('completed');
    expect(done.attempt).toBeGreaterThanOrEqual(2);
    const rows = await handle.db
      .select({ idx: resonances.idx, energy: resonances.energy, width: resonances.width })
      .from(resonances)
      .where(and(eq(resonances.runId, run.id)))
      .orderBy(resonances.idx);
    expect(rows.length).toBe(reference.poles.length);
    expect(new Set(rows.map((r) => r.idx)).size).toBe(rows.length);
    rows.forEach((r, k) => {
      const p = reference.poles[k]!;
      expect(Math.abs(r.energy - p.energy)).toBeLessThan(1e-9 * Math.max(1, Math.abs(p.energy)));
      expect(Math.abs(r.width - p.width)).toBeLessThan(1e-9 * Math.max(1e-6, p.width) + 1e-12);
    });
  }, 240_000);
  it('a finished two-lead transmission run stores R per lead, with R + ΣT = open channels (unitarity)', async () => {
    const model = await models.create(lab.groupId, lab.as('designer').id, smallRectangle('Reflection test'));
    // 3–12 meV crosses the second channel of both width-8 leads (≈ 10.64 meV).
    const run = await runService.create(lab.groupId, lab.as('designer').id, {
      kind: 'transmission',
      modelId: model.id,
      window: { emin: 3, emax: 12, points: 60 },
    });
    const worker = startWorkerLoop({ db: handle.db, boss, compute: runInThread, pollSeconds: 0.2, log: () => {} });
    try {
      const done = await waitFor(
        'the run to finish',
        async () => {
          const r = await runRow(run.id);
          return ['completed', 'failed'].includes(r.status) && r;
        },
        120,
      );
      expect(done.error).toBeNull();
      expect(done.status).toBe('completed');
    } finally {
      await worker.stop();
    }
    const [s] = await handle.db.select().from(spectra).where(eq(spectra.runId, run.id));
    const reflection = s!.reflection!;
    expect(reflection).toHaveLength(2);
    for (const row of reflection) expect(row).toHaveLength(s!.energies.length);
    // Open channels of a hard-wall lead W sites wide: E above 2t(1 − cos(mπ/(W+1))) on the square
    // lattice (tight-binding band of a strip, common practice, no source); t from ħ²/(2m*a²), CODATA ħ²/2m_e.
    const t = hoppingEnergy(5, 0.067);
    const openChannels = (e: number) => [1, 2, 3, 4, 5, 6, 7, 8].filter((m) => e > 2 * t * (1 - Math.cos((m * Math.PI) / 9))).length;
    let twoChannels = 0;
    s!.energies.forEach((e, n) => {
      const channels = openChannels(e);
      if (channels === 2) twoChannels++;
      for (let lead = 0; lead < 2; lead++) {
        let sum = reflection[lead]![n]!;
        s!.pairs.forEach((p, k) => {
          if (p.from === lead) sum += s!.transmission[k]![n]!;
        });
        expect(Math.abs(sum - channels), `lead ${lead} at ${e} meV`).toBeLessThan(1e-10 * channels);
        expect(reflection[lead]![n]!).toBeGreaterThanOrEqual(-1e-12);
      }
    });
    expect(twoChannels).toBeGreaterThan(0);
  });

  it('a worker computes a pole search and writes poles, mode images and the spectrum once', async () => {
    const model = await models.create(lab.groupId, lab.as('designer').id, smallRectangle('Worker test'));
    const run = await runService.create(lab.groupId, lab.as('designer').id, { kind: 'pole-search', modelId: model.id, window: smallWindow });
    const worker = startWorkerLoop({ db: handle.db, boss, compute: runInThread, pollSeconds: 0.2, log: () => {} });
    const seen: number[] = [];
    try {
      const done = await waitFor(
        'the run to finish',
        async () => {
          const r = await runRow(run.id);
          if (r.progressFraction !== null) seen.push(r.progressFraction);
          return ['completed', 'failed'].includes(r.status) && r;
        },
        120,
      );
      expect(done.error).toBeNull();
      expect(done.status).toBe('completed');
      expect(done.attempt).toBe(1);
      expect(done.resonanceCount).toBeGreaterThan(0);
      expect(await resonanceCount(run.id)).toBe(done.resonanceCount);
      // Progress was published while it ran and never went backwards.
      expect(seen.length).toBeGreaterThan(1);
      for (let k = 1; k < seen.length; k++) expect(seen[k]).toBeGreaterThanOrEqual(seen[k - 1]!);
      const [images] = await handle.db
        .select({ n: count() })
        .from(modeImages)
        .innerJoin(resonances, eq(resonances.id, modeImages.resonanceId))
        .where(eq(resonances.runId, run.id));
      expect(images!.n).toBe(2 * done.resonanceCount!);
      const [spectrum] = await handle.db.select().from(spectra).where(eq(spectra.runId, run.id));
      expect(spectrum!.energies.length).toBeGreaterThan(100);

      // Handling the same job again (a duplicate delivery) changes nothing.
      await handleRunJob({ db: handle.db, compute: runInThread }, { runId: run.id, retryCount: 0, retryLimit: 3 });
      expect(await resonanceCount(run.id)).toBe(done.resonanceCount);
      expect((await runRow(run.id)).attempt).toBe(1);
    } finally {
      await worker.stop();
    }
  });

  // its waits add up to 210 s on a loaded machine

  it('a pole search split over two threads finds the same poles as one thread', async () => {
    const task = { kind: 'pole-search' as const, document: smallRectangle('Split'), window: smallWindow, spectrumPoints: 100 };
    const one = await runInThread(task, () => {});
    const two = await runPartitioned(task, 2, () => {});
    expect(two.certificate!.certified).toBe(one.certificate!.certified);
    expect(two.poles.length).toBe(one.poles.length);
    const a = one.poles.map((p) => p.energy).sort((x, y) => x - y);
    const b = two.poles.map((p) => p.energy).sort((x, y) => x - y);
    a.forEach((e, k) => expect(Math.abs(e - b[k]!)).toBeLessThan(1e-9 * Math.max(1, e)));
    expect(two.spectrum.energies.length).toBe(one.spectrum.energies.length);
    expect(two.certificate!.pieces.length).toBeGreaterThan(one.certificate!.pieces.length - 1);
  });
});
