// Catalogue API against the real database: a handful of resonances with hand-picked
// values, then each filter, sort, page, export, edit and image answer is checked against
// what those values imply.
import fc from 'fast-check';
import Papa from 'papaparse';
import { PNG } from 'pngjs';
import request from 'supertest';
import { and, eq } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { auditLog } from '../../server/db/schema/audit.js';
import { modeImages, resonances } from '../../server/db/schema/catalogue.js';
import { cavityModels, modelVersions } from '../../server/db/schema/models.js';
import { runs } from '../../server/db/schema/runs.js';
import type { Db } from '../../server/db/client.js';
import { createLab, type Lab } from './lab-fixture.js';
import { signInAs, type SignedIn } from './sign-in-as.js';
import { startTestApp, type TestApp } from './test-app.js';

/** ħ in meV·ps, CODATA 2018 (as in docs/physics-model.md): τ = ħ/Γ. */
const HBAR = 0.6582119569;

interface Fixture {
  key: string;
  family: string;
  material: string;
  fieldT: number;
  dims: { widthNm?: number; heightNm?: number; radiusNm?: number; lengthNm?: number };
  energy: number;
  width: number;
  tags: string[];
  notes: string;
  modelName: string;
  day: number;
  nearThreshold?: boolean;
}

// Q = E/Γ and τ = ħ/Γ follow from these; a bound state (Γ = 0) has neither.
const fixtures: Fixture[] = [
  {
    key: 'r1',
    family: 'rectangle',
    material: 'GaAs',
    fieldT: 0,
    dims: { widthNm: 300, heightNm: 200 },
    energy: 1.0,
    width: 0.01,
    tags: ['candidate'],
    notes: 'whispering gallery mode',
    modelName: 'Harrow notch dot',
    day: 1,
  },
  {
    key: 'r2',
    family: 'disk',
    material: 'InAs',
    fieldT: 1.0,
    dims: { radiusNm: 150 },
    energy: 2.5,
    width: 0.0005,
    tags: ['candidate', 'fabricate'],
    notes: '',
    modelName: 'Quarry ring',
    day: 3,
  },
  {
    key: 'r3',
    family: 'disk',
    material: 'GaAs',
    fieldT: 0.5,
    dims: { radiusNm: 250 },
    energy: 4.0,
    width: 0.4,
    tags: [],
    notes: 'bouncing ball orbit',
    modelName: 'Quarry ring',
    day: 2,
  },
  {
    key: 'r4',
    family: 'stadium',
    material: 'GaAs',
    fieldT: 0,
    dims: { lengthNm: 400, radiusNm: 100 },
    energy: 3.0,
    width: 0,
    tags: ['bic'],
    notes: '',
    modelName: 'Long stadium',
    day: 5,
  },
  {
    key: 'r5',
    family: 'rectangle',
    material: 'GaAs',
    fieldT: 0,
    dims: { widthNm: 600, heightNm: 400 },
    energy: 6.0,
    width: 0.06,
    tags: [],
    notes: 'scar close to the channel edge',
    modelName: 'Harrow notch dot',
    day: 4,
    nearThreshold: true,
  },
];

async function insertFixtures(db: Db, lab: Lab, rows: Fixture[]): Promise<{ ids: Record<string, string>; runId: string; modelId: string }> {
  const [model] = await db.insert(cavityModels).values({ groupId: lab.groupId, name: 'fixture model' }).returning();
  const [version] = await db
    .insert(modelVersions)
    .values({
      modelId: model!.id,
      groupId: lab.groupId,
      version: 1,
      document: {
        leads: [
          { side: 'left', start: 2, width: 4, name: 'source' },
          { side: 'top', start: 5, width: 3 },
        ],
      },
      family: 'rectangle',
      material: 'GaAs',
      effectiveMass: 0.067,
      spacingNm: 5,
      fieldT: 0,
      siteCount: 100,
      leadCount: 2,
      hoppingMeV: 22.7,
      keyDimensions: {},
    })
    .returning();
  const [run] = await db
    .insert(runs)
    .values({
      groupId: lab.groupId,
      modelVersionId: version!.id,
      kind: 'pole-search',
      status: 'completed',
      window: { emin: 0.5, emax: 7 },
      thresholds: [2.2, 5.9],
    })
    .returning();
  const ids: Record<string, string> = {};
  for (const [idx, f] of rows.entries()) {
    const bound = f.width === 0;
    const [row] = await db
      .insert(resonances)
      .values({
        groupId: lab.groupId,
        runId: run!.id,
        modelId: model!.id,
        modelVersionId: version!.id,
        idx,
        energy: f.energy,
        width: f.width,
        lifetimePs: bound ? null : HBAR / f.width,
        quality: bound ? null : f.energy / f.width,
        partialWidths: [
          { lead: 'source', width: f.width / 4 },
          { lead: 'top1', width: (3 * f.width) / 4 },
        ],
        petermann: 1.01,
        residual: 1e-11,
        bound,
        nearThreshold: f.nearThreshold ?? false,
        overlapping: false,
        tags: f.tags,
        notes: f.notes,
        modelName: f.modelName,
        modelVersion: 1,
        family: f.family,
        material: f.material,
        fieldT: f.fieldT,
        spacingNm: 5,
        ...f.dims,
        createdAt: new Date(Date.UTC(2025, 0, f.day)),
      })
      .returning({ id: resonances.id });
    ids[f.key] = row!.id;
  }
  return { ids, runId: run!.id, modelId: model!.id };
}

let app: TestApp;
let lab: Lab;
let otherLab: Lab;
let ids: Record<string, string>;
let otherIds: Record<string, string>;
let runId: string;
let designer: SignedIn;
let viewer: SignedIn;
let reviewer: SignedIn;
let stranger: SignedIn;

/** Fixture keys of the rows a search returns, in order. */
function keysOf(items: { id: string }[]): string[] {
  const byId = Object.fromEntries(Object.entries(ids).map(([k, v]) => [v, k]));
  return items.map((i) => byId[i.id] ?? `foreign:${i.id}`);
}

async function search(query: string): Promise<{
  keys: string[];
  total: number;
  body: { items: Record<string, unknown>[]; total: number; page: number; pageSize: number; [more: string]: unknown };
}> {
  const res = await viewer.get(`/api/groups/${lab.groupId}/catalogue?${query}`);
  expect(res.status, JSON.stringify(res.body)).toBe(200);
  return { keys: keysOf(res.body.items), total: res.body.total, body: res.body };
}

beforeAll(async () => {
  app = await startTestApp();
  const db = app.handle.db;
  lab = await createLab(db, ['admin', 'designer', 'reviewer', 'viewer']);
  otherLab = await createLab(db, ['admin']);
  ({ ids, runId } = await insertFixtures(db, lab, fixtures));
  // The other group has a resonance inside every window used below: it must never show.
  ({ ids: otherIds } = await insertFixtures(db, otherLab, [{ ...fixtures[0]!, key: 'o1', energy: 2.0, tags: ['candidate', 'fabricate', 'bic'] }]));
  designer = await signInAs(app, lab.as('designer').email);
  viewer = await signInAs(app, lab.as('viewer').email);
  reviewer = await signInAs(app, lab.as('reviewer').email);
  stranger = await signInAs(app, otherLab.as('admin').email);
});

afterAll(async () => {
  await app?.close();
});

describe('GET /catalogue filters', () => {
  it("lists only the group's resonances, by energy ascending by default", async () => {
    const { keys, total } = await search('');
    expect(keys).toEqual(['r1', 'r2', 'r4', 'r3', 'r5']);
    expect(total).toBe(5);
  });

  it.each([
    ['family=disk', ['r2', 'r3']],
    ['family=disk,stadium', ['r2', 'r4', 'r3']],
    ['family=disk&family=stadium', ['r2', 'r4', 'r3']],
    ['material=InAs', ['r2']],
    ['emin=2&emax=4', ['r2', 'r4', 'r3']],
    ['emin=2.6', ['r4', 'r3', 'r5']],
    ['gmin=0.001&gmax=0.1', ['r1', 'r5']],
    // Q of a bound state is infinite: kept by a lower bound, dropped by an upper one.
    ['qmin=1000', ['r2', 'r4']],
    ['qmax=100', ['r1', 'r3', 'r5']],
    // τ = ħ/Γ: r2 ≈ 1316 ps, r1 ≈ 65.8 ps, r5 ≈ 10.97 ps, r3 ≈ 1.65 ps, r4 infinite.
    ['taumin=100', ['r2', 'r4']],
    ['taumax=10', ['r3']],
    ['taumin=10&taumax=70', ['r1', 'r5']],
    ['bmin=0.5&bmax=1', ['r2', 'r3']],
    ['bound=true', ['r4']],
    ['bound=false', ['r1', 'r2', 'r3', 'r5']],
    ['dim.width.min=400', ['r5']],
    ['dim.height.max=250', ['r1']],
    ['dim.radius.max=150', ['r2', 'r4']],
    ['dim.radius.min=200&dim.radius.max=300', ['r3']],
    ['dim.length.min=300', ['r4']],
    ['tag=candidate', ['r1', 'r2']],
    ['tag=candidate&tag=fabricate', ['r2']],
    ['tag=Fabricate', ['r2']],
    ['tag=nothing', []],
    ['family=rectangle&emin=5', ['r5']],
    ['emin=', ['r1', 'r2', 'r4', 'r3', 'r5']],
  ])('%s', async (query, expected) => {
    const { keys, total } = await search(query);
    expect(keys).toEqual(expected);
    expect(total).toBe(expected.length);
  });

  it('never fails on odd free text: any mix of tsquery operators, quotes, accents and control characters', async () => {
    const unit = fc.constantFrom(
      'a',
      'Q',
      '7',
      '-',
      '_',
      '.',
      ':',
      '*',
      '&',
      '|',
      '!',
      '(',
      ')',
      "'",
      '"',
      '\\',
      '<',
      '>',
      ' ',
      '\t',
      'é',
      'ß',
      '中',
      '@',
      '%',
      '+',
      '/',
      '—',
    );
    await fc.assert(
      fc.asyncProperty(fc.string({ unit, maxLength: 16 }), async (text) => {
        const res = await viewer.get(`/api/groups/${lab.groupId}/catalogue?q=${encodeURIComponent(text)}`);
        expect(res.status, `q=${JSON.stringify(text)}: ${JSON.stringify(res.body)}`).toBe(200);
      }),
      { numRuns: 60 },
    );
    const nul = await viewer.get(`/api/groups/${lab.groupId}/catalogue?q=a%00b`);
    expect(nul.status).toBe(400);
    expect(nul.body.issues[0].path).toBe('query.q');
  });

  it.each([
    // Prefix words on model names and notes, case-insensitive, all words required.
    ['q=whisp', ['r1']],
    ['q=BOUNCING%20ba', ['r3']],
    ['q=notch', ['r1', 'r5']],
    ['q=quarry%20orbit', ['r3']],
    // A hyphenated word is indexed whole and in parts; asked for hyphenated, the whole must be there.
    ['q=channel-edge', []],
    ['q=channel%20edge', ['r5']],
    ['q=zebra', []],
    ['q=%26%7C!()', []],
    ["q=it's", []],
  ])('free text %s', async (query, expected) => {
    const { keys } = await search(query);
    expect(keys).toEqual(expected);
  });
});

describe('GET /catalogue sorting and pages', () => {
  it.each([
    ['sort=energy&dir=desc', ['r5', 'r3', 'r4', 'r2', 'r1']],
    ['sort=width&dir=asc', ['r4', 'r2', 'r1', 'r5', 'r3']],
    ['sort=width&dir=desc', ['r3', 'r5', 'r1', 'r2', 'r4']],
    // Equal Q (r1, r5 both 100) falls back to energy; infinite Q sorts beyond every finite one.
    ['sort=quality&dir=asc', ['r3', 'r1', 'r5', 'r2', 'r4']],
    ['sort=quality&dir=desc', ['r4', 'r2', 'r5', 'r1', 'r3']],
    ['sort=lifetime&dir=asc', ['r3', 'r5', 'r1', 'r2', 'r4']],
    ['sort=lifetime&dir=desc', ['r4', 'r2', 'r1', 'r5', 'r3']],
    ['sort=date&dir=asc', ['r1', 'r3', 'r2', 'r5', 'r4']],
    ['sort=date&dir=desc', ['r4', 'r5', 'r2', 'r3', 'r1']],
    ['sort=model&dir=asc', ['r1', 'r5', 'r4', 'r2', 'r3']],
    ['sort=geometry&dir=asc', ['r2', 'r3', 'r1', 'r5', 'r4']],
    ['sort=tags&dir=asc', ['r3', 'r5', 'r4', 'r1', 'r2']],
  ])('%s', async (query, expected) => {
    const { keys } = await search(query);
    expect(keys).toEqual(expected);
  });

  it('pages through the matches with the full total on every page', async () => {
    const pages = await Promise.all([1, 2, 3, 4].map((p) => search(`pageSize=2&page=${p}`)));
    expect(pages.map((p) => p.keys)).toEqual([['r1', 'r2'], ['r4', 'r3'], ['r5'], []]);
    for (const [i, p] of pages.entries()) {
      expect(p.total).toBe(5);
      expect(p.body.page).toBe(i + 1);
      expect(p.body.pageSize).toBe(2);
    }
    expect((await search('')).body.pageSize).toBe(25);
  });

  it('pages forward and back by cursor, with an exact total of a small set', async () => {
    const first = await search('pageSize=2');
    expect(first.body).toMatchObject({ totalKind: 'exact', total: 5, page: 1, prevCursor: null });
    expect(typeof first.body.countedAt).toBe('string');
    const second = await search(`pageSize=2&cursor=${first.body.nextCursor}`);
    const third = await search(`pageSize=2&cursor=${second.body.nextCursor}`);
    expect([first.keys, second.keys, third.keys]).toEqual([['r1', 'r2'], ['r4', 'r3'], ['r5']]);
    expect([second.body.page, third.body.page]).toEqual([2, 3]);
    expect(third.body.nextCursor).toBeNull();
    const back = await search(`pageSize=2&cursor=${third.body.prevCursor}`);
    expect(back.keys).toEqual(['r4', 'r3']);
    expect(back.body.page).toBe(2);
    const start = await search(`pageSize=2&cursor=${back.body.prevCursor}`);
    expect(start.keys).toEqual(['r1', 'r2']);
    expect(start.body.prevCursor).toBeNull();
    // Filter and sort travel in the query; the cursor only says where to continue.
    const disks = await search('family=disk,stadium&sort=width&dir=desc&pageSize=1');
    const nextDisk = await search(`family=disk,stadium&sort=width&dir=desc&pageSize=1&cursor=${disks.body.nextCursor}`);
    expect([disks.keys, nextDisk.keys]).toEqual([['r3'], ['r2']]);
    expect((await search('count=exact')).body).toMatchObject({ totalKind: 'exact', total: 5 });
  });

  it('refuses a cursor of another filter', async () => {
    const { body } = await search('family=disk&pageSize=1');
    const res = await viewer.get(`/api/groups/${lab.groupId}/catalogue?family=rectangle&pageSize=1&cursor=${body.nextCursor}`);
    expect(res.status).toBe(400);
    expect(res.body.issues.map((i: { path: string }) => i.path)).toEqual(['query.cursor']);
    expect(res.body.message).toContain('different filter or sort');
  });

  it('answers rows in the ResonanceRow shape with image links', async () => {
    const { body } = await search('family=disk&sort=energy');
    const row = body.items[0]!;
    expect(row).toMatchObject({
      id: ids.r2,
      runId,
      family: 'disk',
      material: 'InAs',
      keyDimensions: { radius: 150 },
      tags: ['candidate', 'fabricate'],
      bound: false,
      modelName: 'Quarry ring',
      modelVersion: 1,
      thumbnailUrl: `/api/groups/${lab.groupId}/resonances/${ids.r2}/mode.png?size=thumb`,
      imageUrl: `/api/groups/${lab.groupId}/resonances/${ids.r2}/mode.png?size=full`,
    });
    expect(Object.keys(row.keyDimensions as object)).toEqual(['radius']);
    expect(row.energy as number).toBeCloseTo(2.5, 12);
    expect(row.quality as number).toBeCloseTo(5000, 8);
    expect(row.lifetimePs as number).toBeCloseTo(HBAR / 0.0005, 8);
    expect(row.createdAt).toBe('2025-01-03T00:00:00.000Z');
    const bound = (await search('bound=true')).body.items[0]!;
    expect(bound.lifetimePs).toBeNull();
    expect(bound.quality).toBeNull();
  });
});

describe('GET /catalogue bad filters', () => {
  it.each([
    ['emin=abc', 'query.emin'],
    ['emin=1&emin=2', 'query.emin'],
    ['emin=5&emax=2', 'query.emax'],
    ['gmax=1e999', 'query.gmax'],
    ['dim.width.min=wide', 'query.dim.width.min'],
    ['pageSize=500', 'query.pageSize'],
    ['page=0', 'query.page'],
    ['sort=colour', 'query.sort'],
    ['dir=up', 'query.dir'],
    ['bound=maybe', 'query.bound'],
    ['tag=bad!tag', 'query.tag.0'],
    // Numbered pages stop 10,000 rows deep; deeper pages follow the cursor.
    ['page=402&pageSize=25', 'query.page'],
    ['page=2&cursor=abc', 'query.page'],
    ['cursor=not%20a%20cursor', 'query.cursor'],
    ['cursor=bm90LWpzb24', 'query.cursor'],
    ['count=roughly', 'query.count'],
  ])('%s → 400 naming %s', async (query, path) => {
    const res = await viewer.get(`/api/groups/${lab.groupId}/catalogue?${query}`);
    expect(res.status).toBe(400);
    expect(res.body.code).toBe('validation_failed');
    expect(res.body.issues.map((i: { path: string }) => i.path)).toContain(path);
    expect(res.body.message).toContain(path);
  });
});

describe('GET /resonances/:id', () => {
  it('gives the run, its thresholds, the other poles of the run and the leads', async () => {
    const res = await viewer.get(`/api/groups/${lab.groupId}/resonances/${ids.r3}`);
    expect(res.status).toBe(200);
    expect(res.body.id).toBe(ids.r3);
    expect(res.body.run).toMatchObject({ id: runId, kind: 'pole-search', status: 'completed', window: { emin: 0.5, emax: 7 }, certificate: null });
    expect(res.body.model).toMatchObject({ name: 'Quarry ring', version: 1 });
    expect(res.body.thresholds).toEqual([2.2, 5.9]);
    expect(res.body.leads).toEqual([
      { name: 'source', side: 'left', width: 4 },
      { name: 'top1', side: 'top', width: 3 },
    ]);
    const others = res.body.otherPoles as { id: string; energy: number }[];
    expect(keysOf(others)).toEqual(['r1', 'r2', 'r4', 'r5']);
  });

  it("answers 404 for another group's resonance, a stranger, and a malformed id", async () => {
    expect((await viewer.get(`/api/groups/${lab.groupId}/resonances/${otherIds.o1}`)).status).toBe(404);
    expect((await stranger.get(`/api/groups/${lab.groupId}/resonances/${ids.r1}`)).status).toBe(404);
    expect((await stranger.get(`/api/groups/${otherLab.groupId}/resonances/${ids.r1}`)).status).toBe(404);
    expect((await viewer.get(`/api/groups/${lab.groupId}/resonances/not-a-uuid`)).status).toBe(404);
  });
});

describe('PATCH /resonances/:id', () => {
  it('is refused to viewers and reviewers', async () => {
    for (const who of [viewer, reviewer]) {
      const res = await who.patch(`/api/groups/${lab.groupId}/resonances/${ids.r5}`, { tags: ['x'] });
      expect(res.status).toBe(403);
      expect(res.body.code).toBe('forbidden');
    }
    const [row] = await app.handle.db.select({ tags: resonances.tags }).from(resonances).where(eq(resonances.id, ids.r5!));
    expect(row!.tags).toEqual([]);
  });

  it('lets a designer set tags and notes, normalised, with an audit entry', async () => {
    const res = await designer.patch(`/api/groups/${lab.groupId}/resonances/${ids.r5}`, {
      tags: ['  High-Q ', 'check width', 'high-q'],
      notes: 'bowtie lobe, fabricate next',
    });
    expect(res.status, JSON.stringify(res.body)).toBe(200);
    expect(res.body.tags).toEqual(['high-q', 'check width']);
    expect(res.body.notes).toBe('bowtie lobe, fabricate next');

    expect((await search('tag=high-q')).keys).toEqual(['r5']);
    expect((await search('q=bowt')).keys).toEqual(['r5']);

    const entries = await app.handle.db
      .select()
      .from(auditLog)
      .where(and(eq(auditLog.groupId, lab.groupId), eq(auditLog.action, 'resonance.tagged')));
    expect(entries).toHaveLength(1);
    expect(entries[0]!.actorId).toBe(lab.as('designer').id);
    expect(entries[0]!.details).toMatchObject({ resonanceId: ids.r5, tagsBefore: [], tags: ['high-q', 'check width'] });
  });

  it.each([
    ['a slash in a tag', { tags: ['ok', 'no/slash'] }, 'tags.1'],
    ['a 41-character tag', { tags: ['x'.repeat(41)] }, 'tags.0'],
    ['a blank tag', { tags: ['   '] }, 'tags.0'],
    ['21 tags', { tags: Array.from({ length: 21 }, (_, i) => `t${i}`) }, 'tags'],
    ['4001 characters of notes', { notes: 'n'.repeat(4001) }, 'notes'],
    ['notes that are a number', { notes: 7 }, 'notes'],
    ['notes with a NUL character', { notes: 'a\u0000b' }, 'notes'],
    ['an unknown field', { tag: ['typo'] }, 'body'],
    ['an empty change', {}, 'body'],
  ])('refuses %s, naming the field', async (_label, body, path) => {
    const res = await designer.patch(`/api/groups/${lab.groupId}/resonances/${ids.r1}`, body);
    expect(res.status).toBe(400);
    expect(res.body.issues.map((i: { path: string }) => i.path)).toContain(path);
  });

  it("answers 404 for another group's resonance", async () => {
    const res = await designer.patch(`/api/groups/${lab.groupId}/resonances/${otherIds.o1}`, { tags: ['mine'] });
    expect(res.status).toBe(404);
    const strangerRes = await stranger.patch(`/api/groups/${otherLab.groupId}/resonances/${ids.r1}`, { tags: ['mine'] });
    expect(strangerRes.status).toBe(404);
    const [row] = await app.handle.db.select({ tags: resonances.tags }).from(resonances).where(eq(resonances.id, otherIds.o1!));
    expect(row!.tags).not.toContain('mine');
  });
});

describe('exports', () => {
  it('CSV: attachment, a header naming units, one line per match in the chosen order', async () => {
    const res = await viewer.get(`/api/groups/${lab.groupId}/catalogue/export.csv?family=disk,stadium&sort=energy&dir=desc&page=1&pageSize=1`);
    expect(res.status).toBe(200);
    expect(res.headers['content-type']).toMatch(/^text\/csv/);
    expect(res.headers['content-disposition']).toMatch(/^attachment; filename="poleward-catalogue-\d{4}-\d{2}-\d{2}\.csv"$/);
    const text = res.text;
    expect(text.split('\r\n')[0]!.startsWith('energy_meV,width_meV,lifetime_ps,quality,')).toBe(true);
    const parsed = Papa.parse<Record<string, string>>(text.trim(), { header: true });
    expect(parsed.errors).toEqual([]);
    // Paging parameters do not limit an export: all three matches come out.
    expect(parsed.data.map((r) => r.resonance_id)).toEqual([ids.r3, ids.r4, ids.r2]);
    const r2 = parsed.data[2]!;
    expect(Number(r2.energy_meV)).toBeCloseTo(2.5, 12);
    expect(Number(r2.width_meV)).toBeCloseTo(0.0005, 15);
    expect(Number(r2.quality)).toBeCloseTo(5000, 8);
    expect(Number(r2.radius_nm)).toBe(150);
    expect(r2.width_nm).toBe('');
    expect(r2.tags).toBe('candidate; fabricate');
    expect(r2.material).toBe('InAs');
    const bound = parsed.data[1]!;
    expect(bound.lifetime_ps).toBe('');
    expect(bound.bound).toBe('true');
  });

  it('CSV: a note that looks like a formula is defused', async () => {
    const patch = await designer.patch(`/api/groups/${lab.groupId}/resonances/${ids.r4}`, { notes: '=HYPERLINK("http://x")' });
    expect(patch.status).toBe(200);
    const res = await viewer.get(`/api/groups/${lab.groupId}/catalogue/export.csv?bound=true`);
    const parsed = Papa.parse<Record<string, string>>(res.text.trim(), { header: true });
    expect(parsed.data[0]!.notes.startsWith("'=")).toBe(true);
  });

  it('CSV of an empty selection is the header alone', async () => {
    const res = await viewer.get(`/api/groups/${lab.groupId}/catalogue/export.csv?tag=nothing`);
    expect(res.status).toBe(200);
    expect(res.text.trim().split('\r\n')).toHaveLength(1);
  });

  it('JSON: units and the same rows as the search', async () => {
    const res = await viewer.get(`/api/groups/${lab.groupId}/catalogue/export.json?emin=2&emax=4`).buffer(true);
    expect(res.status).toBe(200);
    expect(res.headers['content-disposition']).toMatch(/^attachment; filename=".*\.json"$/);
    const body = JSON.parse(res.text) as { units: Record<string, string>; items: { id: string }[] };
    expect(body.units.energy).toBe('meV');
    expect(keysOf(body.items)).toEqual(['r2', 'r4', 'r3']);
  });

  it('refuses a bad filter before sending anything', async () => {
    const res = await viewer.get(`/api/groups/${lab.groupId}/catalogue/export.csv?qmin=high`);
    expect(res.status).toBe(400);
    expect(res.body.issues[0].path).toBe('query.qmin');
  });
});

describe('GET /resonances/:id/mode.png', () => {
  let png: Buffer;

  beforeAll(async () => {
    const image = new PNG({ width: 2, height: 2 });
    image.data.fill(200);
    png = PNG.sync.write(image);
    await app.handle.db.insert(modeImages).values({ resonanceId: ids.r1!, size: 'thumb', width: 2, height: 2, etag: 'r1-thumb-v1', png });
  });

  it('serves the PNG with its ETag and a long private cache lifetime', async () => {
    const res = await viewer.get(`/api/groups/${lab.groupId}/resonances/${ids.r1}/mode.png?size=thumb`).buffer(true);
    expect(res.status).toBe(200);
    expect(res.headers['content-type']).toBe('image/png');
    expect(res.headers.etag).toBe('"r1-thumb-v1"');
    expect(res.headers['cache-control']).toBe('private, max-age=31536000, immutable');
    expect(Buffer.compare(res.body as Buffer, png)).toBe(0);
  });

  it('answers 304 to a matching If-None-Match and 200 to a stale one', async () => {
    const url = `/api/groups/${lab.groupId}/resonances/${ids.r1}/mode.png?size=thumb`;
    const fresh = await viewer.get(url).set('If-None-Match', '"r1-thumb-v1"');
    expect(fresh.status).toBe(304);
    expect(fresh.headers.etag).toBe('"r1-thumb-v1"');
    const listed = await viewer.get(url).set('If-None-Match', 'W/"old", "r1-thumb-v1"');
    expect(listed.status).toBe(304);
    const stale = await viewer.get(url).set('If-None-Match', '"r1-thumb-v0"');
    expect(stale.status).toBe(200);
  });

  it('keeps an ETag stored with its quotes (as the run worker writes it) as it is', async () => {
    await app.handle.db.insert(modeImages).values({ resonanceId: ids.r2!, size: 'full', width: 2, height: 2, etag: '"0123abcd"', png });
    const url = `/api/groups/${lab.groupId}/resonances/${ids.r2}/mode.png?size=full`;
    const res = await viewer.get(url);
    expect(res.status).toBe(200);
    expect(res.headers.etag).toBe('"0123abcd"');
    expect((await viewer.get(url).set('If-None-Match', '"0123abcd"')).status).toBe(304);
  });

  it('answers 404 for a missing size, another group, or a stranger; 400 for an unknown size', async () => {
    expect((await viewer.get(`/api/groups/${lab.groupId}/resonances/${ids.r1}/mode.png?size=full`)).status).toBe(404);
    expect((await viewer.get(`/api/groups/${lab.groupId}/resonances/${otherIds.o1}/mode.png?size=thumb`)).status).toBe(404);
    expect((await stranger.get(`/api/groups/${otherLab.groupId}/resonances/${ids.r1}/mode.png?size=thumb`)).status).toBe(404);
    const bad = await viewer.get(`/api/groups/${lab.groupId}/resonances/${ids.r1}/mode.png?size=huge`);
    expect(bad.status).toBe(400);
    expect(bad.body.issues[0].path).toBe('query.size');
  });

  it('needs a signed-in member', async () => {
    const res = await request(app.server).get(`/api/groups/${lab.groupId}/resonances/${ids.r1}/mode.png?size=thumb`);
    expect(res.status).toBe(401);
  });
});
