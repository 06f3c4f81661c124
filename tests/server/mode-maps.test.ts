// Mode maps against the real database: a pole search stores the current of every pole,
// the resonance's current is served, and maps computed on demand are queued, cached by
// their parameters, computed by the worker (in-process here, and once through pg-boss
// and a worker thread) and refused with field paths when the request is wrong.
import { inlineCompute } from '../../server/compute/compute-pool.js';
import { eq } from 'drizzle-orm';
import type PgBoss from 'pg-boss';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { resonances } from '../../server/db/schema/catalogue.js';
import { modeMaps, resonanceCurrents } from '../../server/db/schema/mode-maps.js';
import { startBoss } from '../../server/jobs/boss.js';
import { runEngineTask } from '../../server/jobs/engine-task.js';
import { handleRunJob } from '../../server/jobs/run-job.js';
import { ModelService } from '../../server/models/model-service.js';
import { modeMapQueue, type ModeMapQueue } from '../../server/modemaps/mode-map-queue.js';
import { runModeMapTask, type ModeMapPayload } from '../../server/modemaps/mode-map-task.js';
import { handleModeMapJob, startModeMapWorker } from '../../server/modemaps/mode-map-worker.js';
import { RunService } from '../../server/runs/run-service.js';
import { createLab, type Lab } from './lab-fixture.js';
import { signInAs, type SignedIn } from './sign-in-as.js';
import { recordingQueue, startTestApp, testDatabaseUrl, type TestApp } from './test-app.js';
import { smallRectangle, smallWindow } from './fixtures/small-cavity.js';
import { readFileSync } from 'node:fs';

/** ħ in meV·ps, CODATA 2018 (docs/physics-model.md). */
const HBAR = 0.6582119569;

const float32 = (b64: string) => {
  const buf = Buffer.from(b64, 'base64');
  return new Float32Array(buf.buffer.slice(buf.byteOffset, buf.byteOffset + buf.byteLength));
};

let app: TestApp;
let lab: Lab;
let other: Lab;
let viewer: SignedIn;
let outsider: SignedIn;
let runId: string;
let modelId: string;
const queued: string[] = [];
const queue: ModeMapQueue = {
  async enqueue(mapId) {
    queued.push(mapId);
    return `map-job-${queued.length}`;
  },
};
const inProcess = (task: Parameters<typeof runModeMapTask>[0]) => Promise.resolve(runModeMapTask(task));

beforeAll(async () => {
  app = await startTestApp({ queue: recordingQueue(), modeMapQueue: queue });
  lab = await createLab(app.handle.db, ['designer', 'viewer']);
  other = await createLab(app.handle.db, ['designer']);
  viewer = await signInAs(app, lab.as('viewer').email);
  outsider = await signInAs(app, other.as('designer').email);
  const model = await new ModelService(app.handle.db, inlineCompute).create(lab.groupId, lab.as('designer').id, smallRectangle('Map test', { field: 0.5 }));
  modelId = model.id;
  const run = await new RunService(app.handle.db, recordingQueue(), inlineCompute).create(lab.groupId, lab.as('designer').id, {
    kind: 'pole-search',
    modelId,
    window: smallWindow,
  });
  runId = run.id;
  await handleRunJob(
    { db: app.handle.db, compute: (task, onProgress) => Promise.resolve(runEngineTask(task, { onProgress })) },
    { runId, retryCount: 0, retryLimit: 3 },
  );
});
afterAll(async () => {
  await app?.close();
});

async function poles() {
  return app.handle.db.select().from(resonances).where(eq(resonances.runId, runId));
}

describe('pole currents stored by the run', () => {
  it('stores a current for every pole, whose lead currents are the partial widths over ħ', async () => {
    const rows = await poles();
    expect(rows.length).toBeGreaterThanOrEqual(2);
    for (const r of rows) {
      const [c] = await app.handle.db.select().from(resonanceCurrents).where(eq(resonanceCurrents.resonanceId, r.id));
      expect(c).toBeDefined();
      expect(c!.vectors.length).toBe(4 * 2 * 600); // float32 (j_x, j_y) on 30 × 20 sites
      c!.leadCurrents.forEach((l, k) => expect(Math.abs(l.current * HBAR - r.partialWidths[k]!.width)).toBeLessThan(1e-9 * r.width));
    }
  });

  it('serves the current with the mode to members and 404 to strangers', async () => {
    const [r] = await poles();
    const res = await viewer.get(`/api/groups/${lab.groupId}/resonances/${r!.id}/current`);
    expect(res.status).toBe(200);
    const body = res.body as ModeMapPayload;
    expect(body.unit).toBe('1/ps');
    expect(body.grid).toEqual({ nx: 30, ny: 20 });
    expect(body.lattice).toBe('square');
    expect(float32(body.psi)).toHaveLength(2 * 600);
    expect(float32(body.vectors)).toHaveLength(2 * 600);
    expect(Buffer.from(body.mask, 'base64')).toHaveLength(Math.ceil(600 / 8));
    const total = body.leads.reduce((s, l) => s + l.current, 0);
    // Flux form of the width: the net outflow of a normalised mode is Γ/ħ (docs/physics-model.md).
    expect(Math.abs(total - r!.width / HBAR)).toBeLessThan(1e-9 * (r!.width / HBAR));
    expect((await outsider.get(`/api/groups/${lab.groupId}/resonances/${r!.id}/current`)).status).toBe(404);
    expect((await viewer.get(`/api/groups/${lab.groupId}/resonances/not-a-uuid/current`)).status).toBe(404);
  });
});

describe('maps on demand', () => {
  it('queues a Husimi map of a resonance once, computes it and answers the cached map afterwards', async () => {
    const [r] = await poles();
    const body = { resonanceId: r!.id, husimi: { directions: 24, gridNm: 20 } };
    const first = await viewer.post(`/api/groups/${lab.groupId}/mode-maps`, body);
    expect(first.status).toBe(202);
    expect(first.body.status).toBe('queued');
    expect(queued).toContain(first.body.id);
    const again = await viewer.post(`/api/groups/${lab.groupId}/mode-maps`, { husimi: { gridNm: 20, directions: 24 }, resonanceId: r!.id });
    expect(again.status).toBe(200);
    expect(again.body.id).toBe(first.body.id);
    await handleModeMapJob({ db: app.handle.db, compute: inProcess }, { mapId: first.body.id, retryCount: 0, retryLimit: 2 });
    const done = await viewer.get(`/api/groups/${lab.groupId}/mode-maps/${first.body.id}`);
    expect(done.body.status).toBe('completed');
    const result = done.body.result as ModeMapPayload;
    expect(result.state.kind).toBe('pole');
    expect(Math.abs(result.state.energy - r!.energy)).toBeLessThan(1e-12 * r!.energy);
    expect(result.husimi!.directions).toHaveLength(24);
    const points = float32(result.husimi!.points).length / 2;
    expect(points).toBeGreaterThan(4);
    expect(float32(result.husimi!.distribution)).toHaveLength(points * 24);
    // A square-lattice payload carries no valley fields.
    expect(Object.keys(result.husimi!).filter((k) => ['valleys', 'valleyShare', 'carrier', 'diracEnergy'].includes(k))).toEqual([]);
    expect((await viewer.get(`/api/groups/${lab.groupId}/resonances/${r!.id}/mode-maps`)).body.items[0].id).toBe(first.body.id);
    expect((await outsider.get(`/api/groups/${lab.groupId}/mode-maps/${first.body.id}`)).status).toBe(404);
  });

  it('computes a scattering state whose current into the drain balances the source (incoming flux 1)', async () => {
    const res = await viewer.post(`/api/groups/${lab.groupId}/mode-maps`, { modelId, energy: 4.5, lead: 0, channel: 1 });
    expect(res.status).toBe(202);
    await handleModeMapJob({ db: app.handle.db, compute: inProcess }, { mapId: res.body.id, retryCount: 0, retryLimit: 2 });
    const [row] = await app.handle.db.select().from(modeMaps).where(eq(modeMaps.id, res.body.id));
    expect(row!.status).toBe('completed');
    const result = row!.result as unknown as ModeMapPayload;
    expect(result.unit).toBe('incoming flux');
    expect(result.kirchhoffResidual).toBeLessThan(1e-10);
    const [source, drain] = result.leads;
    expect(drain!.current).toBeGreaterThan(0);
    expect(drain!.current).toBeLessThanOrEqual(1 + 1e-10);
    expect(Math.abs(source!.current + drain!.current)).toBeLessThan(1e-10);
    expect(float32(result.ldos!)).toHaveLength(600);
  });

  it('computes the valley-resolved Husimi map of a graphene flake (the demo dot G1) through the worker', async () => {
    const entry = JSON.parse(readFileSync(new URL('../../catalogue/hl-graphene-g1.json', import.meta.url), 'utf8')) as {
      model: Record<string, unknown>;
    };
    const flake = await new ModelService(app.handle.db, inlineCompute).create(lab.groupId, lab.as('designer').id, {
      ...entry.model,
      name: 'Graphene map test',
    });
    // 1.2 eV above the Dirac point (E_D = 0 here: t′ = 0): electron-like everywhere.
    const res = await viewer.post(`/api/groups/${lab.groupId}/mode-maps`, {
      modelId: flake.id,
      energy: 1200,
      lead: 0,
      channel: 1,
      husimi: { directions: 36, gridNm: 0.25 },
    });
    expect(res.status).toBe(202);
    await handleModeMapJob({ db: app.handle.db, compute: inProcess }, { mapId: res.body.id, retryCount: 0, retryLimit: 2 });
    const [row] = await app.handle.db.select().from(modeMaps).where(eq(modeMaps.id, res.body.id));
    expect(row!.error).toBeNull();
    expect(row!.status).toBe('completed');
    const result = row!.result as unknown as ModeMapPayload;
    expect(result.lattice).toBe('honeycomb');
    const h = result.husimi!;
    expect(h.diracEnergy).toBe(0);
    const points = float32(h.points).length / 2;
    expect(points).toBeGreaterThan(10);
    expect(h.valleys!.map((v) => v.name)).toEqual(['K', 'K′']);
    const total = float32(h.distribution);
    const [pk, pk2] = h.valleys!.map((v) => float32(v.distribution));
    const share = float32(h.valleyShare!);
    const carrier = float32(h.carrier!);
    expect(total).toHaveLength(points * 36);
    for (let p = 0; p < points; p++) {
      expect(carrier[p]).toBe(1);
      let sk = 0;
      let all = 0;
      for (let d = 0; d < 36; d++) {
        const k = p * 36 + d;
        // The map is the sum of its valleys (to float32 rounding).
        expect(Math.abs(pk![k]! + pk2![k]! - total[k]!)).toBeLessThanOrEqual(1e-6 * Math.max(total[k]!, 1e-30));
        sk += pk![k]!;
        all += total[k]!;
      }
      expect(Math.abs(share[p]! - sk / all)).toBeLessThan(1e-5);
    }
  });

  it('refuses a wrong request with the field that is wrong', async () => {
    const closed = await viewer.post(`/api/groups/${lab.groupId}/mode-maps`, { modelId, energy: 4.5, lead: 0, channel: 7 });
    expect(closed.status).toBe(400);
    expect(closed.body.issues[0].path).toBe('channel');
    expect(closed.body.issues[0].message).toContain('open channels at this energy: 1');
    const lead = await viewer.post(`/api/groups/${lab.groupId}/mode-maps`, { modelId, energy: 4.5, lead: 3, channel: 1 });
    expect(lead.status).toBe(400);
    expect(lead.body.issues[0].path).toBe('lead');
    const both = await viewer.post(`/api/groups/${lab.groupId}/mode-maps`, { resonanceId: (await poles())[0]!.id, energy: 3 });
    expect(both.status).toBe(400);
    expect(both.body.issues.map((i: { path: string }) => i.path)).toContain('energy');
    const husimi = await viewer.post(`/api/groups/${lab.groupId}/mode-maps`, { modelId, energy: 4.5, lead: 0, channel: 1, husimi: { directions: 2 } });
    expect(husimi.status).toBe(400);
    expect(husimi.body.issues[0].path).toBe('husimi.directions');
    const stranger = await outsider.post(`/api/groups/${other.groupId}/mode-maps`, { resonanceId: (await poles())[0]!.id });
    expect(stranger.status).toBe(404);
  });
});

describe('maps through the queue', () => {
  let boss: PgBoss;
  afterAll(async () => {
    await boss?.stop({ graceful: false, wait: true });
  });

  it('a map worker takes the job from pg-boss and computes it in a worker thread', async () => {
    boss = await startBoss({ databaseUrl: testDatabaseUrl() });
    const [r] = await poles();
    const q = modeMapQueue(boss);
    const [row] = await app.handle.db
      .insert(modeMaps)
      .values({
        groupId: lab.groupId,
        modelVersionId: r!.modelVersionId,
        resonanceId: r!.id,
        params: { source: { kind: 'resonance', resonanceId: r!.id }, husimi: { directions: 12, gridNm: 25 } },
        cacheKey: `queue-test-${Date.now()}`,
      })
      .returning();
    await q.enqueue(row!.id);
    const worker = startModeMapWorker({ db: app.handle.db, boss, pollSeconds: 0.2, log: () => {} });
    try {
      const until = Date.now() + 60_000;
      let status = 'queued';
      while (status !== 'completed' && status !== 'failed' && Date.now() < until) {
        await new Promise((res) => setTimeout(res, 250));
        [{ status }] = await app.handle.db.select({ status: modeMaps.status }).from(modeMaps).where(eq(modeMaps.id, row!.id));
      }
      expect(status).toBe('completed');
    } finally {
      await worker.stop();
    }
  });
});
