// Parameter studies and ensembles through the API with the real queue (pg-boss) and an
// in-process study worker: fan-out, progress, outcome, reuse of identical steps,
// cancellation, a step saved as a model version, exports, and clear 400s.
import { and, eq } from 'drizzle-orm';
import type PgBoss from 'pg-boss';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { studySteps } from '../../server/db/schema/studies.js';
import { resonances } from '../../server/db/schema/catalogue.js';
import { startBoss } from '../../server/jobs/boss.js';
import { studyQueue } from '../../server/studies/study-queue.js';
import { runStudyStepTask } from '../../server/studies/study-step-task.js';
import { startStudyWorker } from '../../server/studies/study-worker.js';
import { studyDetailSchema } from '../../shared/api/studies.js';
import { createLab, type Lab } from './lab-fixture.js';
import { signInAs, type SignedIn } from './sign-in-as.js';
import { startTestApp, testDatabaseUrl, type TestApp } from './test-app.js';
import { dotWindow, smallDot } from './fixtures/small-dot.js';
import { waitFor } from './wait-for.js';

describe('studies API', () => {
  let app: TestApp;
  let boss: PgBoss;
  let lab: Lab;
  let designer: SignedIn;
  let viewer: SignedIn;
  let worker: { stop: () => Promise<void> } | null = null;
  let modelId: string;

  beforeAll(async () => {
    boss = await startBoss({ databaseUrl: testDatabaseUrl(), maintenanceIntervalSeconds: 1 });
    app = await startTestApp({ studyQueue: studyQueue(boss, 60) });
    lab = await createLab(app.handle.db, ['designer', 'viewer']);
    designer = await signInAs(app, lab.as('designer').email);
    viewer = await signInAs(app, lab.as('viewer').email);
    const m = await designer.post(`/api/groups/${lab.groupId}/models`, { document: smallDot() });
    expect(m.status).toBe(201);
    modelId = m.body.id;
  });

  afterAll(async () => {
    await worker?.stop();
    await app?.close();
    await boss?.stop({ graceful: false, wait: false }).catch(() => {});
  });

  const startWorker = () => {
    worker ??= startStudyWorker({ db: app.handle.db, boss, compute: async (task) => runStudyStepTask(task), pollSeconds: 0.2, log: () => {} });
  };
  const stopWorker = async () => {
    await worker?.stop();
    worker = null;
  };
  const sweep = { kind: 'sweep', parameters: [{ path: 'potential.0.amplitude', values: { from: 0, to: 0.6, count: 4 } }], window: dotWindow };
  const finished = (id: string) =>
    waitFor(
      `study ${id} to end`,
      async () => {
        const r = await designer.get(`/api/groups/${lab.groupId}/studies/${id}`);
        return ['completed', 'failed', 'cancelled'].includes(r.body.status) && r.body;
      },
      120,
    );

  it('fans a sweep out into one job per step and assembles its trajectories', async () => {
    const est = await designer.post(`/api/groups/${lab.groupId}/studies/estimate`, { ...sweep, modelId });
    expect(est.status).toBe(200);
    expect(est.body.steps).toBe(4);
    expect(est.body.secondsOneWorker).toBeGreaterThan(0);
    const created = await designer.post(`/api/groups/${lab.groupId}/studies`, { ...sweep, modelId, name: 'gate sweep' });
    expect(created.status).toBe(201);
    expect(created.body.stepCount).toBe(4);
    expect(created.body.steps.queued).toBe(4);
    const jobs = await app.handle.db.select({ jobId: studySteps.jobId }).from(studySteps).where(eq(studySteps.studyId, created.body.id));
    expect(new Set(jobs.map((j) => j.jobId)).size).toBe(4);
    startWorker();
    const done = await finished(created.body.id);
    expect(studyDetailSchema.safeParse(done).success).toBe(true);
    expect(done.status).toBe('completed');
    expect(done.steps.completed).toBe(4);
    expect(done.outcome.kind).toBe('sweep');
    done.outcome.steps.forEach((s: { values: number[] }, k: number) => expect(Math.abs(s.values[0] - 0.2 * k)).toBeLessThan(1e-12));
    const poles = done.outcome.steps.reduce((n: number, s: { poles: unknown[] }) => n + s.poles.length, 0);
    const points = done.outcome.lines[0].trajectories.reduce((n: number, t: { points: unknown[] }) => n + t.points.length, 0);
    expect(poles).toBeGreaterThan(0);
    expect(points).toBe(poles);
    // The viewer reads it; a CSV export says where figures can mislead.
    const csv = await viewer.get(`/api/groups/${lab.groupId}/studies/${created.body.id}/export?format=csv`);
    expect(csv.status).toBe(200);
    expect(csv.text).toMatch(/^# Poleward study export/);
    expect(csv.text.trim().split('\n').length).toBe(3 + points);
    // A step opens with its poles and mode densities, and can be kept as a model version.
    const step = await viewer.get(`/api/groups/${lab.groupId}/studies/${created.body.id}/steps/2`);
    expect(step.status).toBe(200);
    expect(step.body.document.potential[0].amplitude).toBeCloseTo(0.4, 12);
    const density = step.body.poles[0].density as number[];
    expect(Math.abs(density.reduce((s, v) => s + v, 0) - 1)).toBeLessThan(1e-5);
    expect((await viewer.post(`/api/groups/${lab.groupId}/studies/${created.body.id}/steps/2/save`)).status).toBe(403);
    const saved = await designer.post(`/api/groups/${lab.groupId}/studies/${created.body.id}/steps/2/save`);
    expect(saved.status).toBe(201);
    expect(saved.body.version).toBe(2);
    const v2 = await designer.get(`/api/groups/${lab.groupId}/models/${modelId}/versions/2`);
    expect(v2.body.document.potential[0].amplitude).toBeCloseTo(0.4, 12);
    // The step's poles are in the catalogue under version 2, with where they came from and their mode images.
    const stepPoles = done.outcome.steps[2].poles as { energy: number; width: number }[];
    expect(saved.body.resonances).toBe(stepPoles.length);
    const cat = await viewer.get(`/api/groups/${lab.groupId}/catalogue?tag=study&pageSize=50`);
    expect(cat.status).toBe(200);
    const filed = (cat.body.items as { id: string; modelVersion: number; energy: number; width: number; tags: string[]; notes: string }[]).filter(
      (r) => r.modelVersion === 2,
    );
    expect(filed.length).toBe(stepPoles.length);
    for (const p of stepPoles) {
      const row = filed.find((r) => Math.abs(r.energy - p.energy) <= 1e-9 * p.energy);
      expect(row).toBeDefined();
      expect(Math.abs(row!.width - p.width)).toBeLessThanOrEqual(1e-9 * Math.max(p.width, 1e-12));
      expect(row!.tags).toContain('study');
      expect(row!.notes).toContain('potential.0.amplitude = 0.4');
    }
    const detail = await viewer.get(`/api/groups/${lab.groupId}/resonances/${filed[0].id}`);
    expect(detail.status).toBe(200);
    expect(detail.body.run).toBeNull();
    expect(detail.body.model).toMatchObject({ id: modelId, version: 2 });
    const [stored] = await app.handle.db.select({ details: resonances.details }).from(resonances).where(eq(resonances.id, filed[0].id));
    const provenance = (stored!.details as { provenance: { study: { studyId: string; step: number; values: { path: string; value: number }[] } } }).provenance;
    expect(provenance.study).toMatchObject({ studyId: created.body.id, step: 2, values: [{ path: 'potential.0.amplitude' }] });
    expect(provenance.study.values[0].value).toBeCloseTo(0.4, 12);
    const image = await viewer.get(`/api/groups/${lab.groupId}/resonances/${filed[0].id}/mode.png?size=thumb`);
    expect(image.status).toBe(200);
    expect(image.headers['content-type']).toBe('image/png');
    // A step not computed cannot be kept (nothing to file), and nothing is written.
    await app.handle.db
      .update(studySteps)
      .set({ status: 'failed' })
      .where(and(eq(studySteps.studyId, created.body.id), eq(studySteps.index, 3)));
    const refused = await designer.post(`/api/groups/${lab.groupId}/studies/${created.body.id}/steps/3/save`);
    expect(refused.status).toBe(409);
    expect((await designer.get(`/api/groups/${lab.groupId}/models/${modelId}`)).body.latestVersion).toBe(2);
  });

  it('gives the transmission map T(E, p) of a sweep, one row per step, in the outcome and the exports', async () => {
    const created = await designer.post(`/api/groups/${lab.groupId}/studies`, { ...sweep, modelId, version: 1, transmissionPoints: 30 });
    expect(created.status).toBe(201);
    startWorker();
    const done = await finished(created.body.id);
    expect(done.status).toBe('completed');
    const map = done.outcome.transmission;
    expect(map.energies.length).toBe(30);
    expect(map.from).toBe('source');
    expect(map.into).toEqual(['drain']);
    // Reused searches (the first test's steps) still get their map rows, computed once and stored.
    expect(done.reusedSteps).toBe(4);
    done.outcome.steps.forEach((s: { transmission: number[] }) => {
      expect(s.transmission.length).toBe(30);
      s.transmission.forEach((t) => expect(t).toBeGreaterThanOrEqual(0));
    });
    // The narrow resonance shows as a peak of T near the pole (an isolated pole gives a peak at Re z; common practice, no source).
    const first = done.outcome.steps[0];
    const narrow = first.poles.find((p: { width: number }) => p.width < 0.05);
    const peak = map.energies[first.transmission.indexOf(Math.max(...first.transmission))];
    expect(Math.abs(peak - narrow.energy)).toBeLessThanOrEqual(2 * (map.energies[1] - map.energies[0]));
    const csv = await viewer.get(`/api/groups/${lab.groupId}/studies/${created.body.id}/export?format=csv&table=transmission`);
    expect(csv.status).toBe(200);
    const lines = csv.text.trim().split('\n');
    const header = lines.findIndex((l) => l.startsWith('line,'));
    expect(lines[header]).toBe('line,line_value,step,potential.0.amplitude,energy_meV,transmission,certified');
    expect(lines.length - header - 1).toBe(4 * 30);
    expect(csv.text).toMatch(/# Transmission from lead source into drain/);
    const json = await viewer.get(`/api/groups/${lab.groupId}/studies/${created.body.id}/export?format=json`);
    expect(JSON.parse(json.text).transmission.energies.length).toBe(30);
    // A study without a map says so.
    const none = await designer.post(`/api/groups/${lab.groupId}/studies`, { ...sweep, modelId, version: 1, transmissionPoints: 0 });
    const plain = await finished(none.body.id);
    expect(plain.outcome.transmission).toBeNull();
    expect((await viewer.get(`/api/groups/${lab.groupId}/studies/${none.body.id}/export?table=transmission`)).status).toBe(409);
    const bad = await designer.post(`/api/groups/${lab.groupId}/studies`, { ...sweep, modelId, transmissionPoints: 1 });
    expect(bad.status).toBe(400);
    expect(JSON.stringify(bad.body.issues)).toMatch(/transmissionPoints/);
  });

  it('reuses the results of identical steps', async () => {
    // The same model document (version 1), window and options as the first study.
    const again = await designer.post(`/api/groups/${lab.groupId}/studies`, { ...sweep, modelId, version: 1 });
    expect(again.status).toBe(201);
    startWorker();
    const done = await finished(again.body.id);
    expect(done.status).toBe('completed');
    expect(done.reusedSteps).toBe(4);
    expect(done.stepList.every((s: { reused: boolean }) => s.reused)).toBe(true);
  });

  it('cancels the steps not started and keeps the finished ones', async () => {
    await stopWorker();
    const created = await designer.post(`/api/groups/${lab.groupId}/studies`, {
      kind: 'sweep',
      modelId,
      version: 1,
      parameters: [{ path: 'field', values: { list: [0.1, 0.2, 0.3] } }],
      window: dotWindow,
    });
    expect(created.status).toBe(201);
    // One step computed by hand as a worker would, then the rest cancelled before any worker runs.
    const id = created.body.id as string;
    const { handleStudyStepJob } = await import('../../server/studies/study-worker.js');
    expect(
      await handleStudyStepJob({ db: app.handle.db, compute: async (t) => runStudyStepTask(t) }, { studyId: id, index: 0, retryCount: 0, retryLimit: 3 }),
    ).toBe('completed');
    const cancelled = await designer.post(`/api/groups/${lab.groupId}/studies/${id}/cancel`);
    expect(cancelled.status).toBe(202);
    expect(cancelled.body.steps.cancelled).toBe(2);
    startWorker();
    const done = await finished(id);
    expect(done.status).toBe('cancelled');
    expect(done.steps.completed).toBe(1);
    expect(done.outcome.steps[0].status).toBe('completed');
    expect(done.outcome.steps[0].poles.length).toBeGreaterThan(0);
    const [kept] = await app.handle.db
      .select()
      .from(studySteps)
      .where(and(eq(studySteps.studyId, id), eq(studySteps.index, 0)));
    expect(kept!.status).toBe('completed');
  });

  it('runs an ensemble and gives its statistics and yield', async () => {
    startWorker();
    const created = await designer.post(`/api/groups/${lab.groupId}/studies`, {
      kind: 'ensemble',
      modelId,
      version: 1,
      window: dotWindow,
      realisations: 3,
      seed: 5,
      roughness: { rmsNm: 0, correlationNm: 10 },
      follow: { energy: 25.56 },
      tolerances: { width: { min: 0 } },
    });
    expect(created.status).toBe(201);
    expect(created.body.stepCount).toBe(4);
    const done = await finished(created.body.id);
    expect(done.status).toBe('completed');
    const stats = done.outcome.statistics;
    expect(stats.followed).toBe(3);
    expect(stats.energy.std).toBeLessThanOrEqual(1e-12 * stats.energy.mean);
    expect(stats.yield.fraction).toBe(1);
    const csv = await viewer.get(`/api/groups/${lab.groupId}/studies/${created.body.id}/export`);
    expect(csv.text.trim().split('\n').length).toBe(3 + 3);
  });

  it('refuses a path that is not a number of the model, naming it', async () => {
    const bad = await designer.post(`/api/groups/${lab.groupId}/studies`, {
      ...sweep,
      modelId,
      parameters: [{ path: 'potential.4.amplitude', values: { list: [1] } }],
    });
    expect(bad.status).toBe(400);
    expect(JSON.stringify(bad.body.issues)).toMatch(/parameters\.0\.path/);
    expect(bad.body.message).toMatch(/potential\.4/);
    const worse = await designer.post(`/api/groups/${lab.groupId}/studies`, { ...sweep, modelId, window: { emin: 5, emax: 1, gammaMax: 1 } });
    expect(worse.status).toBe(400);
    expect((await viewer.post(`/api/groups/${lab.groupId}/studies`, { ...sweep, modelId })).status).toBe(403);
  });
});
