// A model version's derived figures and its cavity outline are computed once, when the version
// is saved, and stored with it (issue 8, part 4): reading a model, a version or a run does no
// geometry or figure work, and the fabrication layout reads the stored outline. Counted with spies
// on the functions that do it (validation, the rasteriser, the outline tracer, the derived
// figures), wrapped around the real ones. The app computes
// in-process here (inlineCompute), so the save's own calls are seen too.
import { eq, sql } from 'drizzle-orm';
import { afterAll, beforeAll, beforeEach, describe, expect, it, vi } from 'vitest';
import { inlineCompute } from '../../server/compute/compute-pool.js';
import { modelVersions } from '../../server/db/schema/models.js';
import { backfillDerivedFigures, backfillOutlines } from '../../server/models/model-backfill.js';
import { buildLayoutFiles } from '../../server/fabrication/layout-files.js';
import * as outlineTrace from '../../shared/layout/outline-trace.js';
import * as cavityModel from '../../shared/model/model-validation.js';
import * as derivedFigures from '../../shared/model/derived-figures.js';
import * as geometry from '../../shared/model/geometry.js';
import { createLab, type Lab } from './lab-fixture.js';
import { signInAs, type SignedIn } from './sign-in-as.js';
import { recordingQueue, startTestApp, type TestApp } from './test-app.js';
import { smallRectangle, smallWindow } from './fixtures/small-cavity.js';

vi.mock('../../shared/model/derived-figures.js', async (importOriginal) => {
  const real = await importOriginal<typeof import('../../shared/model/derived-figures.js')>();
  return { ...real, deriveFigures: vi.fn(real.deriveFigures) };
});
vi.mock('../../shared/model/geometry.js', async (importOriginal) => {
  const real = await importOriginal<typeof import('../../shared/model/geometry.js')>();
  return { ...real, rasteriseShape: vi.fn(real.rasteriseShape) };
});
vi.mock('../../shared/layout/outline-trace.js', async (importOriginal) => {
  const real = await importOriginal<typeof import('../../shared/layout/outline-trace.js')>();
  return { ...real, traceMaskOutline: vi.fn(real.traceMaskOutline) };
});
vi.mock('../../shared/model/model-validation.js', async (importOriginal) => {
  const real = await importOriginal<typeof import('../../shared/model/model-validation.js')>();
  return { ...real, validateCavityModel: vi.fn(real.validateCavityModel) };
});

const spies = () => ({
  deriveFigures: vi.mocked(derivedFigures.deriveFigures).mock.calls.length,
  rasteriseShape: vi.mocked(geometry.rasteriseShape).mock.calls.length,
  validateCavityModel: vi.mocked(cavityModel.validateCavityModel).mock.calls.length,
  traceMaskOutline: vi.mocked(outlineTrace.traceMaskOutline).mock.calls.length,
});
const none = { deriveFigures: 0, rasteriseShape: 0, validateCavityModel: 0, traceMaskOutline: 0 };

let app: TestApp;
let lab: Lab;
let designer: SignedIn;
let modelId: string;
let runId: string;
let saved: { derived: Record<string, unknown> };

beforeAll(async () => {
  app = await startTestApp({ queue: recordingQueue(), compute: inlineCompute });
  lab = await createLab(app.handle.db, ['designer']);
  designer = await signInAs(app, lab.as('designer').email);
});
afterAll(async () => app?.close());
beforeEach(() => vi.clearAllMocks());

const base = () => `/api/groups/${lab.groupId}`;

describe('derived figures stored with the version', () => {
  it('saving validates, rasterises and derives once, and stores the figures with the version', async () => {
    const res = await designer.post(`${base()}/models`, { document: smallRectangle('Stored figures') });
    expect(res.status).toBe(201);
    modelId = res.body.id;
    saved = res.body;
    // The spies see the server's calls: the save's check did the work.
    const counts = spies();
    expect(counts.validateCavityModel).toBe(1);
    expect(counts.rasteriseShape).toBeGreaterThanOrEqual(1);
    expect(counts.deriveFigures).toBeGreaterThanOrEqual(1);
    expect(counts.traceMaskOutline).toBe(1);
    const [row] = await app.handle.db
      .select({ derived: modelVersions.derived, siteCount: modelVersions.siteCount, outline: modelVersions.outline })
      .from(modelVersions)
      .where(eq(modelVersions.modelId, modelId));
    expect(row!.derived).not.toBeNull();
    expect(row!.derived!.siteCount).toBe(row!.siteCount);
    expect(JSON.parse(JSON.stringify(row!.derived))).toEqual(res.body.derived);
    // The traced outline: one part (a rectangle has no holes), area exactly sites·a² (a = 5 nm).
    expect(row!.outline!.parts).toHaveLength(1);
    expect(row!.outline!.parts[0]!.holes).toEqual([]);
    expect(row!.outline!.area).toBeCloseTo(row!.siteCount * 25, 9);
    const run = await designer.post(`${base()}/runs`, { kind: 'pole-search', modelId, window: smallWindow });
    expect(run.status).toBe(201);
    runId = run.body.id;
  });

  it('GET of the model, its version, the run and the run list do no geometry or figure work', async () => {
    const model = await designer.get(`${base()}/models/${modelId}`);
    const version = await designer.get(`${base()}/models/${modelId}/versions/1`);
    const run = await designer.get(`${base()}/runs/${runId}`);
    const list = await designer.get(`${base()}/runs`);
    expect([model.status, version.status, run.status, list.status]).toEqual([200, 200, 200, 200]);
    expect(spies()).toEqual(none);
    // Same figures as when saved; the run's lead names and in-window thresholds come from them.
    expect(model.body.derived).toEqual(saved.derived);
    expect(version.body.derived).toEqual(saved.derived);
    const leads = saved.derived.leads as { name: string; side: string; width: number; thresholds: { opens: number; closes: number }[] }[];
    expect(run.body.leads).toEqual(leads.map((l) => ({ name: l.name, side: l.side, width: l.width })));
    const inWindow = [...new Set(leads.flatMap((l) => l.thresholds.flatMap((t) => [t.opens, t.closes])))].filter(
      (e) => e >= smallWindow.emin && e <= smallWindow.emax,
    );
    expect(run.body.thresholds).toHaveLength(inWindow.length);
  });

  it('the fabrication layout drawn from the stored outline rasterises and traces nothing, and equals the layout traced anew', async () => {
    const [row] = await app.handle.db
      .select({ document: modelVersions.document, outline: modelVersions.outline, siteCount: modelVersions.siteCount })
      .from(modelVersions)
      .where(eq(modelVersions.modelId, modelId));
    const time = new Date('2026-12-02T10:00:00Z');
    const fromStored = buildLayoutFiles(row!.document, 'T', 'S', time, { outline: row!.outline!, siteCount: row!.siteCount });
    expect(spies()).toEqual(none);
    const traced = buildLayoutFiles(row!.document, 'T', 'S', time);
    expect(spies()).toMatchObject({ rasteriseShape: 1, traceMaskOutline: 1 });
    expect(fromStored.layout).toEqual(traced.layout);
    expect(Buffer.from(fromStored.gds).equals(Buffer.from(traced.gds))).toBe(true);
  });

  it('an older or restored version without a stored outline is traced at start-up, not on a read', async () => {
    const [before] = await app.handle.db.select({ outline: modelVersions.outline }).from(modelVersions).where(eq(modelVersions.modelId, modelId));
    await app.handle.db.execute(sql`update model_versions set outline = null where model_id = ${modelId}`);
    const read = await designer.get(`${base()}/models/${modelId}/versions/1`);
    expect(read.status).toBe(200);
    expect(spies()).toEqual(none);
    const { filled } = await backfillOutlines(app.handle.db);
    expect(filled).toBeGreaterThanOrEqual(1);
    expect(spies().traceMaskOutline).toBe(filled);
    const [after] = await app.handle.db.select({ outline: modelVersions.outline }).from(modelVersions).where(eq(modelVersions.modelId, modelId));
    expect(after!.outline).toEqual(before!.outline);
    expect((await backfillOutlines(app.handle.db)).filled).toBe(0);
  });

  it('an older version without stored figures is back-filled at start-up, from its stored site count', async () => {
    await app.handle.db.execute(sql`update model_versions set derived = null where model_id = ${modelId}`);
    // Until the back-fill reaches it, a read derives the figures (no rasterisation): the spy sees it.
    const before = await designer.get(`${base()}/models/${modelId}/versions/1`);
    expect(before.body.derived).toEqual(saved.derived);
    expect(spies()).toMatchObject({ deriveFigures: 1, rasteriseShape: 0, validateCavityModel: 0 });
    vi.clearAllMocks();

    // A row whose document the figures refuse (an unknown material) is skipped, not a failed start.
    const [v1] = await app.handle.db.select().from(modelVersions).where(eq(modelVersions.modelId, modelId));
    const { id: _id, createdAt: _c, ...copy } = v1!;
    const [odd] = await app.handle.db
      .insert(modelVersions)
      .values({ ...copy, version: 2, document: { ...(v1!.document as Record<string, unknown>), material: 'unobtainium' }, derived: null })
      .returning({ id: modelVersions.id });

    const { filled, skipped } = await backfillDerivedFigures(app.handle.db);
    expect(filled).toBeGreaterThanOrEqual(1);
    expect(skipped).toBeGreaterThanOrEqual(1);
    const [oddAfter] = await app.handle.db.select({ derived: modelVersions.derived }).from(modelVersions).where(eq(modelVersions.id, odd!.id));
    expect(oddAfter!.derived).toBeNull();
    expect(spies().rasteriseShape).toBe(0);
    const [row] = await app.handle.db.select({ derived: modelVersions.derived }).from(modelVersions).where(eq(modelVersions.id, v1!.id));
    expect(JSON.parse(JSON.stringify(row!.derived))).toEqual(saved.derived);
    expect((await backfillDerivedFigures(app.handle.db)).filled).toBe(0);

    vi.clearAllMocks();
    const after = await designer.get(`${base()}/models/${modelId}/versions/1`);
    expect(after.body.derived).toEqual(saved.derived);
    expect(spies()).toEqual(none);
  });
});
