// A graphene dot with two zigzag leads through the whole run path: the model saved (its
// figures list the leads' channel ranges), a pole search queued, computed by a worker in an
// engine thread, and its poles, currents, mode images and spectrum written.
import { readFileSync } from 'node:fs';
import { count, eq, inArray } from 'drizzle-orm';
import type PgBoss from 'pg-boss';
import { PNG } from 'pngjs';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { connectDb, type DbHandle } from '../../server/db/client.js';
import { modeImages, resonances } from '../../server/db/schema/catalogue.js';
import { resonanceCurrents } from '../../server/db/schema/mode-maps.js';
import { runs, spectra } from '../../server/db/schema/runs.js';
import { runQueue, startBoss } from '../../server/jobs/boss.js';
import { endLeftoverRuns } from './fixtures/run-queues.js';
import { runEngineTask } from '../../server/jobs/engine-task.js';
import { runInThread } from '../../server/jobs/thread-runner.js';
import { startWorkerLoop } from '../../server/jobs/worker.js';
import { inlineCompute } from '../../server/compute/compute-pool.js';
import { ModelService } from '../../server/models/model-service.js';
import { RunService } from '../../server/runs/run-service.js';
import { createLab, type Lab } from './lab-fixture.js';
import { testDatabaseUrl } from './test-app.js';

const device = JSON.parse(readFileSync(new URL('../../catalogue/hl-graphene-g1.json', import.meta.url), 'utf8')) as {
  model: Record<string, unknown>;
  poleSearch: { emin: number; emax: number; gammaMax: number };
};

let handle: DbHandle;
let boss: PgBoss;
let lab: Lab;
let models: ModelService;
let runService: RunService;

beforeAll(async () => {
  handle = connectDb(testDatabaseUrl(), 4);
  boss = await startBoss({ databaseUrl: testDatabaseUrl() });
  await endLeftoverRuns(handle.db, boss);
  lab = await createLab(handle.db, ['designer']);
  models = new ModelService(handle.db, inlineCompute);
  runService = new RunService(handle.db, runQueue(boss), inlineCompute);
});
afterAll(async () => {
  await boss?.stop({ graceful: false, wait: true });
  await handle?.close();
});

async function waitFor<T>(what: string, probe: () => Promise<T | null | undefined | false>, seconds: number): Promise<T> {
  const until = Date.now() + seconds * 1000;
  for (;;) {
    const v = await probe();
    if (v) return v;
    if (Date.now() > until) throw new Error(`timed out after ${seconds} s waiting for ${what}`);
    await new Promise((r) => setTimeout(r, 250));
  }
}

describe('a graphene dot with zigzag leads on the run path', () => {
  it('is saved with its channel ranges, and a worker writes its poles, currents, mode images and spectrum', async () => {
    const designer = lab.as('designer').id;
    const model = await models.create(lab.groupId, designer, device.model);
    expect(model.derived.lattice).toBe('honeycomb');
    expect(model.derived.leads).toHaveLength(2);
    for (const l of model.derived.leads) expect(l.thresholds.length).toBeGreaterThan(0);

    const window = device.poleSearch;
    const reference = runEngineTask({ kind: 'pole-search', document: device.model, window, spectrumPoints: 200 });
    expect(reference.poles.length).toBeGreaterThan(0);
    const run = await runService.create(lab.groupId, designer, { kind: 'pole-search', modelId: model.id, window });
    const worker = startWorkerLoop({ db: handle.db, boss, compute: runInThread, pollSeconds: 0.2, log: () => {} });
    let done;
    try {
      done = await waitFor(
        'the run to finish',
        async () => {
          const [r] = await handle.db.select().from(runs).where(eq(runs.id, run.id));
          return ['completed', 'failed'].includes(r!.status) && r!;
        },
        180,
      );
    } finally {
      await worker.stop();
    }
    expect(done.error).toBeNull();
    expect(done.status).toBe('completed');
    // The thresholds stored are the leads' band edges inside the window, as the engine has them.
    expect(done.thresholds).toEqual(reference.thresholds);
    expect((done.certificate as { certified: boolean }).certified).toBe(reference.certificate!.certified);

    const rows = await handle.db
      .select({ id: resonances.id, energy: resonances.energy, width: resonances.width, partial: resonances.partialWidths })
      .from(resonances)
      .where(eq(resonances.runId, run.id))
      .orderBy(resonances.idx);
    expect(rows.length).toBe(reference.poles.length);
    rows.forEach((r, k) => {
      expect(Math.abs(r.energy - reference.poles[k]!.energy)).toBeLessThan(1e-9 * Math.abs(r.energy));
      expect(r.partial.map((p) => p.lead)).toEqual(['source', 'drain']);
    });
    const ids = rows.map((r) => r.id);
    const [currents] = await handle.db.select({ n: count() }).from(resonanceCurrents).where(inArray(resonanceCurrents.resonanceId, ids));
    expect(currents!.n).toBe(rows.length);

    // Mode images draw the atoms where they sit: the picture has the flake's proportions
    // ((14·√3/2) × (6·1.5 + 1) a_CC), not those of the 14 × 6 grid of labels.
    const images = await handle.db.select().from(modeImages).where(inArray(modeImages.resonanceId, ids));
    expect(images.length).toBe(2 * rows.length);
    const wide = (14 * Math.sqrt(3)) / 2 / 10;
    for (const img of images) {
      const png = PNG.sync.read(img.png);
      expect(png.width).toBe(img.width);
      expect(Math.abs(img.width / img.height - wide)).toBeLessThan(0.05);
      // Some atoms are lit (not every pixel is the grey outside the flake).
      let lit = 0;
      for (let p = 0; p < png.width * png.height; p++) if (png.data[4 * p] !== 206 || png.data[4 * p + 1] !== 210) lit++;
      expect(lit).toBeGreaterThan(0.3 * png.width * png.height);
    }

    // The spectrum conserves current: R_ℓ + Σ T(ℓ→ℓ′) = N_ℓ, N_ℓ from the model's channel ranges.
    const [s] = await handle.db.select().from(spectra).where(eq(spectra.runId, run.id));
    expect(s!.energies.length).toBeGreaterThan(50);
    const openAt = (lead: number, e: number) =>
      new Set(model.derived.leads[lead]!.thresholds.filter((r) => e > r.opens && e < r.closes).map((r) => r.channel)).size;
    let open = 0;
    s!.energies.forEach((e, n) => {
      for (let lead = 0; lead < 2; lead++) {
        let sum = s!.reflection![lead]![n]!;
        s!.pairs.forEach((p, k) => {
          if (p.from === lead) sum += s!.transmission[k]![n]!;
        });
        expect(Math.abs(sum - openAt(lead, e)), `lead ${lead} at ${e} meV`).toBeLessThan(1e-9 * Math.max(1, openAt(lead, e)));
        open += openAt(lead, e);
      }
    });
    expect(open).toBeGreaterThan(0);
  }, 240_000);
});
