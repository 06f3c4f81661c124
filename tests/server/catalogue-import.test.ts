// Catalogue exchange: export a group's catalogue as JSON, import it into another group as
// its admin, and export that group again: every resonance and figure comes back exactly
// (JSON carries doubles exactly), with its provenance. Invalid files are refused whole.
import { eq, sql } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { resonances } from '../../server/db/schema/catalogue.js';
import { cavityModels } from '../../server/db/schema/models.js';
import { insertResonances } from './fabrication-fixture.js';
import { createLab, type Lab } from './lab-fixture.js';
import { signInAs, type SignedIn } from './sign-in-as.js';
import { startTestApp, type TestApp } from './test-app.js';

let app: TestApp;
let source: Lab;
let target: Lab;
const as: Record<string, SignedIn> = {};

beforeAll(async () => {
  app = await startTestApp();
  source = await createLab(app.handle.db, ['admin', 'designer']);
  target = await createLab(app.handle.db, ['admin', 'designer']);
  // Awkward doubles on purpose: exactness must not depend on short decimals.
  const { ids } = await insertResonances(app.handle.db, source, [
    { energy: 4.2, width: 0.012 },
    { energy: Math.PI, width: 1 / 3 },
    { energy: 7.000000000000001, width: 2.2250738585072014e-300 },
  ]);
  as.sourceAdmin = await signInAs(app, source.as('admin').email);
  as.sourceDesigner = await signInAs(app, source.as('designer').email);
  as.admin = await signInAs(app, target.as('admin').email);
  as.designer = await signInAs(app, target.as('designer').email);
  await as
    .sourceDesigner!.patch(`/api/groups/${source.groupId}/resonances/${ids[1]}`, { tags: ['fabricate', 'scar'], notes: 'bouncing-ball mode, cf. run notes' })
    .expect(200);
});
afterAll(() => app?.close());

async function exportJson(who: SignedIn, groupId: string) {
  const res = await who.get(`/api/groups/${groupId}/catalogue/export.json`);
  expect(res.status).toBe(200);
  return JSON.parse(res.text) as { exportedAt: string; items: Record<string, unknown>[]; models: { modelId: string; version: number; document: unknown }[] };
}

function upload(who: SignedIn, groupId: string, content: string | Buffer, name = 'catalogue.json') {
  return who.agent.post(`/api/groups/${groupId}/catalogue/import`).set('X-CSRF-Token', who.csrf).attach('file', Buffer.from(content), name);
}

async function counts(groupId: string) {
  const [r] = await app.handle.db
    .select({ n: sql<number>`count(*)::int` })
    .from(resonances)
    .where(eq(resonances.groupId, groupId));
  const [m] = await app.handle.db
    .select({ n: sql<number>`count(*)::int` })
    .from(cavityModels)
    .where(eq(cavityModels.groupId, groupId));
  return { resonances: r!.n, models: m!.n };
}

/** The fields that must survive an exchange unchanged (ids, run, fit and dates are the new group's own). */
const kept = [
  'source',
  'modelName',
  'modelVersion',
  'family',
  'keyDimensions',
  'material',
  'fieldT',
  'energy',
  'width',
  'lifetimePs',
  'quality',
  'partialWidths',
  'petermann',
  'residual',
  'bound',
  'nearThreshold',
  'overlapping',
  'tags',
  'notes',
];

describe('catalogue import', () => {
  it('the JSON export carries the model versions its rows came from', async () => {
    const file = await exportJson(as.sourceAdmin!, source.groupId);
    expect(file.items).toHaveLength(3);
    expect(file.models).toHaveLength(1);
    expect(file.models[0]!.version).toBe(1);
    expect((file.models[0]!.document as { name: string }).name).toBe('Fabrication fixture dot');
  });

  it('refuses a non-admin', async () => {
    const file = await exportJson(as.sourceAdmin!, source.groupId);
    const res = await upload(as.designer!, target.groupId, JSON.stringify(file));
    expect(res.status).toBe(403);
  });

  it('refuses invalid files whole, saying what and where; nothing is stored', async () => {
    const before = await counts(target.groupId);
    const broken = await upload(as.admin!, target.groupId, '{\n  "exportedAt": "2026-12-02",\n  "items": [\n    { "id": 1,, }\n  ]\n}');
    expect(broken.status).toBe(400);
    expect(broken.body.message).toMatch(/not valid JSON at line 4/);

    const file = await exportJson(as.sourceAdmin!, source.groupId);
    const badRow = structuredClone(file);
    (badRow.items[2] as Record<string, unknown>).energy = 'seven';
    const res = await upload(as.admin!, target.groupId, JSON.stringify(badRow));
    expect(res.status).toBe(400);
    expect(res.body.issues.map((i: { path: string }) => i.path)).toContain('file.items.2.energy');

    const badModel = structuredClone(file);
    (badModel.models[0]!.document as { spacing: number }).spacing = -5;
    const res2 = await upload(as.admin!, target.groupId, JSON.stringify(badModel));
    expect(res2.status).toBe(400);
    expect(res2.body.issues.map((i: { path: string }) => i.path)).toContain('file.models.0.document.spacing');

    const noModels = { exportedAt: file.exportedAt, items: file.items };
    const res3 = await upload(as.admin!, target.groupId, JSON.stringify(noModels));
    expect(res3.status).toBe(400);
    expect(res3.body.message).toMatch(/export it again/);

    const orphan = structuredClone(file);
    (orphan.items[0] as Record<string, unknown>).modelVersion = 9;
    const res4 = await upload(as.admin!, target.groupId, JSON.stringify(orphan));
    expect(res4.status).toBe(400);
    expect(res4.body.issues[0].path).toBe('file.items.0.modelVersion');

    expect(await counts(target.groupId)).toEqual(before);
  });

  it('export then import into another group reproduces every resonance and figure exactly, with provenance', async () => {
    const file = await exportJson(as.sourceAdmin!, source.groupId);
    const res = await upload(as.admin!, target.groupId, JSON.stringify(file), 'harrow-catalogue.json');
    expect(res.status, JSON.stringify(res.body)).toBe(201);
    expect(res.body.imported).toBe(3);
    expect(res.body.models).toBe(1);

    const again = await exportJson(as.admin!, target.groupId);
    const byEnergy = (rows: Record<string, unknown>[]) => [...rows].sort((a, b) => (a.energy as number) - (b.energy as number));
    const was = byEnergy(file.items);
    const now = byEnergy(again.items);
    expect(now).toHaveLength(was.length);
    now.forEach((row, k) => {
      for (const field of kept) {
        // Exact equality is the claim here: JSON writes the shortest decimal that reads back as the same double.
        expect(row[field], `${field} of row ${k}`).toStrictEqual(was[k]![field]);
      }
      expect(row.id).not.toBe(was[k]!.id);
    });
    expect(again.models[0]!.document).toStrictEqual(file.models[0]!.document);

    const [stored] = await app.handle.db.select({ details: resonances.details }).from(resonances).where(eq(resonances.id, res.body.resonanceIds[0]));
    const provenance = (stored!.details as { provenance: Record<string, unknown> }).provenance;
    expect(provenance.fileName).toBe('harrow-catalogue.json');
    expect(provenance.exportedAt).toBe(file.exportedAt);
    expect(file.items.map((i) => i.id)).toContain(provenance.sourceResonanceId);
    expect(provenance.importedBy).toBe(target.as('admin').id);
  });

  it('refuses to import the same resonances twice', async () => {
    const before = await counts(target.groupId);
    const file = await exportJson(as.sourceAdmin!, source.groupId);
    const res = await upload(as.admin!, target.groupId, JSON.stringify(file));
    expect(res.status).toBe(409);
    expect(res.body.code).toBe('already_imported');
    expect(await counts(target.groupId)).toEqual(before);
  });
});
