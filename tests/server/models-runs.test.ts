import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { eq } from 'drizzle-orm';
import { runs } from '../../server/db/schema/runs.js';
import { createLab, type Lab } from './lab-fixture.js';
import { signInAs, type SignedIn } from './sign-in-as.js';
import { recordingQueue, startTestApp, type RecordingQueue, type TestApp } from './test-app.js';
import { smallRectangle, smallWindow } from './fixtures/small-cavity.js';

let app: TestApp;
let queue: RecordingQueue;
let lab: Lab;
let other: Lab;
let designer: SignedIn;
let viewer: SignedIn;
let outsider: SignedIn;

beforeAll(async () => {
  queue = recordingQueue();
  app = await startTestApp({ queue });
  lab = await createLab(app.handle.db, ['designer', 'viewer', 'reviewer', 'admin']);
  other = await createLab(app.handle.db, ['designer']);
  designer = await signInAs(app, lab.as('designer').email);
  viewer = await signInAs(app, lab.as('viewer').email);
  outsider = await signInAs(app, other.as('designer').email);
});
afterAll(async () => app?.close());

const models = (l: Lab) => `/api/groups/${l.groupId}/models`;
const runsUrl = (l: Lab) => `/api/groups/${l.groupId}/runs`;

describe('cavity models', () => {
  it('a designer creates a model; its searchable figures are derived', async () => {
    const res = await designer.post(models(lab), { document: smallRectangle('Rectangle A') });
    expect(res.status).toBe(201);
    expect(res.body.family).toBe('rectangle');
    expect(res.body.siteCount).toBe(600);
    expect(res.body.keyDimensions.width).toBeCloseTo(150, 9);
    expect(res.body.keyDimensions.height).toBeCloseTo(100, 9);
    // t = (ħ²/2m_e)/(m*/m_e)/a² = 38.09982/0.067/25 meV (CODATA 2018 value of ħ²/2m_e, contract)
    expect(res.body.derived.hopping).toBeCloseTo(38.09982 / 0.067 / 25, 6);
    expect(res.body.versions).toHaveLength(1);
  });

  it('a viewer cannot create or edit models (403), but can read them', async () => {
    const created = await designer.post(models(lab), { document: smallRectangle('Rectangle B') });
    const denied = await viewer.post(models(lab), { document: smallRectangle('Viewer try') });
    expect(denied.status).toBe(403);
    expect(denied.body.code).toBe('forbidden');
    const put = await viewer.agent
      .put(`${models(lab)}/${created.body.id}`)
      .set('X-CSRF-Token', viewer.csrf)
      .send({ document: smallRectangle('x') });
    expect(put.status).toBe(403);
    const read = await viewer.get(`${models(lab)}/${created.body.id}`);
    expect(read.status).toBe(200);
    expect(read.body.name).toBe('Rectangle B');
  });

  it('an invalid model answers 400 naming the field, and nothing is stored', async () => {
    const before = (await designer.get(models(lab))).body.total;
    const bad = smallRectangle('Bad mouth', {
      leads: [
        { side: 'left', start: 5, width: 8 },
        { side: 'right', start: 15, width: 8 }, // rows 15..22 leave the 20-row grid
      ],
    });
    const res = await designer.post(models(lab), { document: bad });
    expect(res.status).toBe(400);
    expect(res.body.code).toBe('validation_failed');
    expect(res.body.issues.some((i: { path: string }) => i.path.startsWith('document.leads.1'))).toBe(true);
    expect((await designer.get(models(lab))).body.total).toBe(before);
  });

  it('editing writes a new version and keeps the old one unchanged', async () => {
    const created = await designer.post(models(lab), { document: smallRectangle('Versioned') });
    const id = created.body.id;
    const edited = await designer.agent
      .put(`${models(lab)}/${id}`)
      .set('X-CSRF-Token', designer.csrf)
      .send({ document: smallRectangle('Versioned', { field: 0.5 }) });
    expect(edited.status).toBe(200);
    expect(edited.body.latestVersion).toBe(2);
    expect(edited.body.fieldT).toBe(0.5);
    const v1 = await designer.get(`${models(lab)}/${id}/versions/1`);
    expect(v1.body.document.field ?? 0).toBe(0);
    const v3 = await designer.get(`${models(lab)}/${id}/versions/3`);
    expect(v3.status).toBe(404);
  });

  it('another group gets 404 for the model, its versions and its runs', async () => {
    const created = await designer.post(models(lab), { document: smallRectangle('Private') });
    expect((await outsider.get(`${models(lab)}/${created.body.id}`)).status).toBe(404);
    expect((await outsider.get(`${models(other)}/${created.body.id}`)).status).toBe(404);
    const run = await outsider.post(runsUrl(other), { kind: 'pole-search', modelId: created.body.id, window: smallWindow });
    expect(run.status).toBe(404);
  });
});

describe('runs', () => {
  it('estimates cost with the thresholds inside the window, then queues the run', async () => {
    const m = await designer.post(models(lab), { document: smallRectangle('For runs') });
    const body = { kind: 'pole-search', modelId: m.body.id, window: { emin: 2, emax: 6, gammaMax: 1 } };
    const est = await designer.post(`${runsUrl(lab)}/estimate`, body);
    expect(est.status).toBe(200);
    expect(est.body.sites).toBe(600);
    // Channel 1 of a W = 8 lead opens at 2t(1 − cos(π/9)) (contract, "Leads").
    const t = 38.09982 / 0.067 / 25;
    const open1 = 2 * t * (1 - Math.cos(Math.PI / 9));
    expect(est.body.thresholdsInWindow.some((e: number) => Math.abs(e - open1) < 1e-9)).toBe(true);
    expect(est.body.pieces).toBe(est.body.thresholdsInWindow.length + 1);

    const sentBefore = queue.sent.length;
    const created = await designer.post(runsUrl(lab), body);
    expect(created.status).toBe(201);
    expect(created.body.status).toBe('queued');
    expect(queue.sent.length).toBe(sentBefore + 1);
    expect(queue.sent.at(-1)!.runId).toBe(created.body.id);
    const [row] = await app.handle.db.select().from(runs).where(eq(runs.id, created.body.id));
    expect(row!.jobId).toBe(queue.sent.at(-1)!.jobId);
  });

  it('a viewer cannot launch (403); a bad window names the field', async () => {
    const m = await designer.post(models(lab), { document: smallRectangle('Window checks') });
    const denied = await viewer.post(runsUrl(lab), { kind: 'pole-search', modelId: m.body.id, window: smallWindow });
    expect(denied.status).toBe(403);
    const bad = await designer.post(runsUrl(lab), { kind: 'pole-search', modelId: m.body.id, window: { emin: 5, emax: 4, gammaMax: 1 } });
    expect(bad.status).toBe(400);
    expect(bad.body.issues.map((i: { path: string }) => i.path)).toContain('window.emax');
  });

  it('the owner cancels a queued run; a viewer may not', async () => {
    const m = await designer.post(models(lab), { document: smallRectangle('Cancel me') });
    const run = await designer.post(runsUrl(lab), { kind: 'transmission', modelId: m.body.id, window: { emin: 1, emax: 5, points: 50 } });
    expect((await viewer.post(`${runsUrl(lab)}/${run.body.id}/cancel`)).status).toBe(403);
    const cancelled = await designer.post(`${runsUrl(lab)}/${run.body.id}/cancel`);
    expect(cancelled.status).toBe(202);
    expect(cancelled.body.status).toBe('cancelled');
    expect((await designer.post(`${runsUrl(lab)}/${run.body.id}/cancel`)).status).toBe(409);
  });

  it('says before a launch when an earlier search of the same model version already covered the window', async () => {
    const m = await designer.post(models(lab), { document: smallRectangle('Searched twice') });
    const search = (emin: number, emax: number) => ({ kind: 'pole-search', modelId: m.body.id, window: { emin, emax, gammaMax: 1 } });
    const twice = (warnings: string[]) => warnings.filter((w) => w.includes('would be listed twice'));
    expect(twice((await designer.post(`${runsUrl(lab)}/estimate`, search(2, 6))).body.warnings)).toEqual([]);

    const first = await designer.post(runsUrl(lab), search(2, 6));
    expect(first.status).toBe(201);
    // Queued: its poles are still to come.
    const [queued] = twice((await designer.post(`${runsUrl(lab)}/estimate`, search(4, 9))).body.warnings);
    expect(queued).toContain('Searched twice v1 was already searched over 2–6 meV (the search launched ');
    expect(queued).toContain('which is queued and files its poles when it ends');
    expect(queued).toContain('so those in 4–6 meV would be listed twice');

    await app.handle.db.update(runs).set({ status: 'completed', resonanceCount: 7 }).where(eq(runs.id, first.body.id));
    const [done] = twice((await designer.post(`${runsUrl(lab)}/estimate`, search(1, 3))).body.warnings);
    expect(done).toContain('which filed 7 pole(s)');
    expect(done).toContain('so those in 2–3 meV would be listed twice');
    // Two searched windows apart: both named, and the two parts of the new window they cover.
    expect((await designer.post(runsUrl(lab), search(8, 10))).status).toBe(201);
    const [both] = twice((await designer.post(`${runsUrl(lab)}/estimate`, search(3, 9))).body.warnings);
    expect(both).toContain('already searched over 2–6 and 8–10 meV (2 searches; the latest');
    expect(both).toContain('so those in 3–6 and 8–9 meV would be listed twice');

    // Windows that only touch, another version of the model, a transmission sweep and a failed search are not counted.
    expect(twice((await designer.post(`${runsUrl(lab)}/estimate`, search(6, 8))).body.warnings)).toEqual([]);
    await designer.agent
      .put(`${models(lab)}/${m.body.id}`)
      .set('X-CSRF-Token', designer.csrf)
      .send({ document: smallRectangle('Searched twice', { field: 0.5 }) });
    expect(twice((await designer.post(`${runsUrl(lab)}/estimate`, { ...search(2, 6), version: 2 })).body.warnings)).toEqual([]);
    const sweep = await designer.post(runsUrl(lab), { kind: 'transmission', modelId: m.body.id, window: { emin: 1, emax: 9, points: 20 } });
    expect(sweep.status).toBe(201);
    await app.handle.db.update(runs).set({ status: 'failed' }).where(eq(runs.id, first.body.id));
    expect(twice((await designer.post(`${runsUrl(lab)}/estimate`, { ...search(2, 6), version: 1 })).body.warnings)).toEqual([]);
  });

  it('a microwave model is told in GHz, as its launcher speaks', async () => {
    const doc = {
      name: 'Searched twice, microwave',
      physics: { kind: 'microwave', permittivity: 2.25, height: 4 },
      spacing: 2,
      grid: { nx: 30, ny: 20 },
      shape: { kind: 'rectangle', x0: 0, y0: 0, width: 60, height: 40 },
      leads: [
        { side: 'left', start: 5, width: 8 },
        { side: 'right', start: 5, width: 8 },
      ],
    };
    const m = await designer.post(models(lab), { document: doc });
    expect(m.status, JSON.stringify(m.body)).toBe(201);
    const body = { kind: 'pole-search', modelId: m.body.id, window: { emin: 0.05, emax: 0.2, gammaMax: 0.01 } };
    expect((await designer.post(runsUrl(lab), body)).status).toBe(201);
    const [said] = (await designer.post(`${runsUrl(lab)}/estimate`, body)).body.warnings.filter((w: string) => w.includes('listed twice'));
    // f = c·√(k²)/(2π√ε_r) with c = 299.792458 mm/ns (SI exact) and k² in mm⁻²; ε_r = 2.25.
    const ghz = (k2: number) => Number(((299.792458 * Math.sqrt(k2)) / (2 * Math.PI * 1.5)).toPrecision(6));
    expect(said).toContain(`over ${ghz(0.05)}–${ghz(0.2)} GHz`);
  });

  it('lists runs of the group only', async () => {
    const mine = await designer.get(runsUrl(lab));
    expect(mine.status).toBe(200);
    expect(mine.body.total).toBeGreaterThan(0);
    const theirs = await outsider.get(runsUrl(other));
    expect(theirs.body.items.every((r: { modelName: string }) => r.modelName !== 'For runs')).toBe(true);
  });
});

describe('geometry family', () => {
  it('a stadium with lead stubs is filed as a stadium, with its radius and straight length', async () => {
    const doc = smallRectangle('Stadium with stubs', {
      grid: { nx: 41, ny: 21 },
      shape: {
        kind: 'union',
        of: [
          { kind: 'stadium', cx: 100, cy: 50, length: 80, radius: 50 },
          { kind: 'rectangle', x0: 0, y0: 30, width: 20, height: 45 },
          { kind: 'rectangle', x0: 180, y0: 30, width: 25, height: 45 },
        ],
      },
      leads: [
        { side: 'left', start: 7, width: 6 },
        { side: 'right', start: 7, width: 6 },
      ],
    });
    const res = await designer.post(models(lab), { document: doc });
    expect(res.body.issues ?? []).toEqual([]);
    expect(res.status).toBe(201);
    expect(res.body.family).toBe('stadium');
    expect(res.body.keyDimensions.radius).toBe(50);
    expect(res.body.keyDimensions.length).toBe(80);
  });
});

describe('run detail', () => {
  it('names the leads in engine order, so the spectrum pairs can be labelled', async () => {
    const m = await designer.post(models(lab), { document: smallRectangle('Lead names') });
    const run = await designer.post(runsUrl(lab), { kind: 'transmission', modelId: m.body.id, window: { emin: 3, emax: 5, points: 20 } });
    const detail = await designer.get(`${runsUrl(lab)}/${run.body.id}`);
    expect(detail.status).toBe(200);
    expect(detail.body.leads.map((l: { name: string }) => l.name)).toEqual(['source', 'drain']);
    expect(detail.body.leads[0].side).toBe('left');
  });
});
