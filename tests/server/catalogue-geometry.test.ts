// Geometry search and lattice validity in the catalogue (issue 10, items 1 and 2): one model
// of every shape family made through the API (so its columns come from the real check), two
// resonances each written by the worker's own result writer (one below and one above the
// model's validity limit), then every dimension filter of every family and the validity
// filter are checked against what the shapes imply.
import Papa from 'papaparse';
import { eq } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { cavityModels, modelVersions } from '../../server/db/schema/models.js';
import { runs } from '../../server/db/schema/runs.js';
import { resonances } from '../../server/db/schema/catalogue.js';
import { writeRunResults, type RunContext } from '../../server/jobs/run-results.js';
import type { EngineTaskResult } from '../../server/jobs/engine-task.js';
import type { RunPole } from '../../server/modemaps/pole-currents.js';
import { backfillDerivedColumns } from '../../server/catalogue/derived-columns-backfill.js';
import { createLab, type Lab } from './lab-fixture.js';
import { signInAs, type SignedIn } from './sign-in-as.js';
import { startTestApp, type TestApp } from './test-app.js';

const a = 5; // nm
/** t = (ħ²/2m_e)/(m* / m_e)/a² for GaAs (m* = 0.067 m_e) at a = 5 nm; ħ²/2m_e = 38.09982 meV·nm² (CODATA 2018). */
const tGaAs = 38.09982 / 0.067 / (a * a);
/** λ = 10a at E = 2t(1 − cos(2π/10)) (below t/2): the limit docs/physics-model.md states. */
const limitOf = (t: number) => 2 * t * (1 - Math.cos((2 * Math.PI) / 10));

const base = (name: string, shape: unknown, grid: { nx: number; ny: number }) => ({ name, spacing: a, material: 'gaas', grid, shape });
const ones = (bytes: number) => Buffer.from(new Uint8Array(bytes).fill(0xff)).toString('base64');

interface Case {
  key: string;
  document: Record<string, unknown>;
  family: string;
  /** The dimensions the shape implies (nm; area nm²), every one the family has; area checked separately where the raster decides it. */
  dims: Record<string, number>;
}

const cases: Case[] = [
  {
    key: 'rect',
    document: base('g rect', { kind: 'rectangle', x0: 0, y0: 0, width: 100, height: 60 }, { nx: 20, ny: 12 }),
    family: 'rectangle',
    dims: { width: 100, height: 60, area: 100 * 60 },
  },
  {
    key: 'disk',
    document: base('g disk', { kind: 'disk', cx: 50, cy: 50, radius: 40 }, { nx: 21, ny: 21 }),
    family: 'disk',
    dims: { radius: 40, width: 85, height: 85 },
  },
  {
    key: 'ellipse-flat',
    document: base('g ellipse flat', { kind: 'ellipse', cx: 50, cy: 30, rx: 40, ry: 20 }, { nx: 21, ny: 13 }),
    family: 'ellipse',
    dims: { rx: 40, ry: 20 },
  },
  {
    key: 'ellipse-tall',
    document: base('g ellipse tall', { kind: 'ellipse', cx: 30, cy: 50, rx: 25, ry: 45 }, { nx: 13, ny: 21 }),
    family: 'ellipse',
    dims: { rx: 25, ry: 45 },
  },
  {
    key: 'annulus',
    document: base('g annulus', { kind: 'annulus', cx: 50, cy: 50, inner: 20, outer: 45 }, { nx: 21, ny: 21 }),
    family: 'annulus',
    dims: { inner: 20, outer: 45 },
  },
  {
    key: 'stadium',
    document: base('g stadium', { kind: 'stadium', cx: 80, cy: 40, length: 60, radius: 30 }, { nx: 33, ny: 17 }),
    family: 'stadium',
    dims: { length: 60, radius: 30 },
  },
  {
    key: 'polygon',
    document: base(
      'g polygon',
      {
        kind: 'polygon',
        vertices: [
          [0, 0],
          [90, 0],
          [0, 60],
        ],
      },
      { nx: 20, ny: 14 },
    ),
    family: 'polygon',
    dims: {},
  },
  {
    key: 'sites',
    document: base(
      'g sites',
      {
        kind: 'sites',
        list: [
          [0, 0],
          [1, 0],
          [2, 0],
          [2, 1],
        ],
      },
      { nx: 4, ny: 3 },
    ),
    family: 'sites',
    dims: { width: 3 * a, height: 2 * a, area: 4 * a * a },
  },
  {
    key: 'bitmap',
    document: base('g bitmap', { kind: 'bitmap', width: 8, height: 4, data: ones(4) }, { nx: 10, ny: 6 }),
    family: 'bitmap',
    dims: { width: 8 * a, height: 4 * a, area: 32 * a * a },
  },
  {
    key: 'union',
    document: base(
      'g union',
      {
        kind: 'union',
        of: [
          { kind: 'ellipse', cx: 50, cy: 50, rx: 30, ry: 15 },
          { kind: 'rectangle', x0: 0, y0: 45, width: 50, height: 10 },
        ],
      },
      { nx: 21, ny: 21 },
    ),
    family: 'ellipse',
    dims: { rx: 30, ry: 15 },
  },
];

/** Which dimensions each family lists (besides width, height and area, which every family has). */
const ownDimensions: Record<string, string[]> = {
  rectangle: [],
  disk: ['radius'],
  ellipse: ['rx', 'ry'],
  annulus: ['inner', 'outer'],
  stadium: ['length', 'radius'],
  polygon: [],
  sites: [],
  bitmap: [],
};
const allDimensions = ['width', 'height', 'radius', 'length', 'rx', 'ry', 'inner', 'outer', 'area'];

let app: TestApp;
let lab: Lab;
let designer: SignedIn;
const modelIds: Record<string, string> = {};

interface Row {
  id: string;
  modelId: string;
  family: string;
  energy: number;
  physics: string;
  keyDimensions: Record<string, number>;
  validity: { limit: number | null; wavelengthSpacings: number | null; aboveLimit: boolean | null };
  microwave: { frequencyGhz: number; widthMhz: number; lifetimeNs: number | null; quality: number | null; validityLimitGhz: number | null } | null;
  lifetimePs: number | null;
  quality: number | null;
}

const pole = (energy: number, width: number): RunPole => ({
  energy,
  width,
  lifetimePs: 0.6582119569 / width,
  quality: energy / width,
  partialWidths: [width],
  petermann: 1,
  residual: 1e-14,
  bound: false,
  nearThreshold: null,
  sheet: [[true]],
  piece: 0,
  mode: new Float64Array([1, 0]),
});

/** Writes two poles for a model through the worker's writer: one at 0.2× and one at 2× the validity limit. */
async function writePoles(modelId: string, energies: number[], width: number): Promise<void> {
  const db = app.handle.db;
  const [mv] = await db
    .select()
    .from(modelVersions)
    .innerJoin(cavityModels, eq(cavityModels.id, modelVersions.modelId))
    .where(eq(modelVersions.modelId, modelId));
  const v = mv!.model_versions;
  const [run] = await db
    .insert(runs)
    .values({ groupId: lab.groupId, modelVersionId: v.id, kind: 'pole-search', status: 'running', attempt: 1, window: { emin: 0, emax: 1, gammaMax: 1 } })
    .returning();
  const ctx: RunContext = {
    runId: run!.id,
    groupId: lab.groupId,
    attempt: 1,
    actorId: null,
    model: { ...v, id: v.modelId, versionId: v.id, name: mv!.cavity_models.name },
  };
  const result: EngineTaskResult = {
    engineVersion: 'test',
    thresholds: [],
    leadNames: ['lead'],
    grid: { nx: 2, ny: 1 },
    sites: { i: Int32Array.from([0]), j: Int32Array.from([0]) },
    poles: energies.map((e) => pole(e, width)),
    certificate: null,
    spectrum: { energies: [], pairs: [], transmission: [], residual: [], reflection: [] },
    stats: {},
  };
  expect(await writeRunResults(db, ctx, result)).toBe(true);
}

beforeAll(async () => {
  app = await startTestApp();
  lab = await createLab(app.handle.db, ['designer']);
  designer = await signInAs(app, lab.as('designer').email);
  for (const c of cases) {
    const res = await designer.post(`/api/groups/${lab.groupId}/models`, { document: c.document });
    expect(res.status, JSON.stringify(res.body)).toBe(201);
    modelIds[c.key] = res.body.id;
    const limit = limitOf(tGaAs);
    await writePoles(res.body.id, [0.2 * limit, 2 * limit], 0.01);
  }
  const mw = await designer.post(`/api/groups/${lab.groupId}/models`, {
    document: {
      name: 'g microwave rectangle',
      physics: { kind: 'microwave', permittivity: 2.25, height: 4 },
      spacing: 2,
      grid: { nx: 30, ny: 20 },
      shape: { kind: 'rectangle', x0: 0, y0: 0, width: 60, height: 40 },
    },
  });
  expect(mw.status, JSON.stringify(mw.body)).toBe(201);
  modelIds['microwave'] = mw.body.id;
  // t = 1/a² = 0.25 mm⁻²: limit 2t(1 − cos(π/5)) ≈ 0.0955 mm⁻².
  await writePoles(mw.body.id, [0.2 * limitOf(0.25), 2 * limitOf(0.25)], 1e-4);
});
afterAll(async () => app?.close());

async function search(query: Record<string, string>): Promise<Row[]> {
  const res = await designer.get(`/api/groups/${lab.groupId}/catalogue?${new URLSearchParams({ ...query, pageSize: '200' })}`);
  expect(res.status, JSON.stringify(res.body)).toBe(200);
  return res.body.items as Row[];
}

describe('geometry columns of every family', () => {
  it('files each family under its own dimension names, with the values the shape implies', async () => {
    const rows = await search({});
    expect(rows).toHaveLength(2 * (cases.length + 1));
    for (const c of cases) {
      const mine = rows.filter((r) => r.modelId === modelIds[c.key]);
      expect(mine).toHaveLength(2);
      for (const r of mine) {
        expect(r.family).toBe(c.family);
        const names = Object.keys(r.keyDimensions).sort();
        expect(names, c.key).toEqual(['area', 'height', 'width', ...ownDimensions[c.family]!].sort());
        for (const [name, value] of Object.entries(c.dims)) expect(r.keyDimensions[name], `${c.key}.${name}`).toBeCloseTo(value, 9);
        // Area = cavity sites × a²: a whole number of plaquettes.
        const plaquettes = r.keyDimensions['area']! / (a * a);
        expect(Math.abs(plaquettes - Math.round(plaquettes))).toBeLessThan(1e-9);
      }
    }
  });

  it('no longer files an ellipse as radius = rx', async () => {
    const rows = await search({ family: 'ellipse' });
    expect(rows.length).toBe(6);
    for (const r of rows) expect(r.keyDimensions['radius']).toBeUndefined();
  });

  it('every dimension filter, at several bounds, returns exactly the rows whose dimension satisfies it', async () => {
    const rows = await search({});
    for (const name of allDimensions) {
      const values = [...new Set(rows.map((r) => r.keyDimensions[name]).filter((v): v is number => v !== undefined))].sort((x, y) => x - y);
      expect(values.length, `${name} has values to filter`).toBeGreaterThan(0);
      const bounds = [values[0]! - 1, ...values, values.at(-1)! + 1];
      for (const bound of bounds) {
        const upTo = await search({ [`dim.${name}.max`]: String(bound) });
        const expectedMax = rows
          .filter((r) => r.keyDimensions[name] !== undefined && r.keyDimensions[name]! <= bound)
          .map((r) => r.id)
          .sort();
        expect(upTo.map((r) => r.id).sort(), `dim.${name}.max=${bound}`).toEqual(expectedMax);
        const from = await search({ [`dim.${name}.min`]: String(bound) });
        const expectedMin = rows
          .filter((r) => r.keyDimensions[name] !== undefined && r.keyDimensions[name]! >= bound)
          .map((r) => r.id)
          .sort();
        expect(from.map((r) => r.id).sort(), `dim.${name}.min=${bound}`).toEqual(expectedMin);
      }
    }
  });

  it('the issue case: ry ≤ 30 nm returns only the flat ellipse and the union filed under its ellipse', async () => {
    const rows = await search({ 'dim.ry.max': '30' });
    expect(new Set(rows.map((r) => r.modelId))).toEqual(new Set([modelIds['ellipse-flat'], modelIds['union']]));
    for (const r of rows) expect(r.keyDimensions['ry']).toBeLessThanOrEqual(30);
  });

  it('combines a family with a dimension filter', async () => {
    const rows = await search({ family: 'annulus', 'dim.inner.min': '10', 'dim.outer.max': '50' });
    expect(rows).toHaveLength(2);
    expect((await search({ family: 'annulus', 'dim.inner.min': '21' })).length).toBe(0);
  });

  it('sorts by every dimension, both ways, in every family: rows lacking it last ascending, first descending', async () => {
    const rows = await search({});
    const families = [...new Set(rows.map((r) => r.family))];
    const key = (r: Row, name: string) => r.keyDimensions[name] ?? Infinity;
    for (const name of allDimensions) {
      for (const dir of ['asc', 'desc'] as const) {
        for (const family of [undefined, ...families]) {
          const query: Record<string, string> = { sort: `dim.${name}`, dir };
          if (family) query['family'] = family;
          const sorted = await search(query);
          const label = `sort=dim.${name}&dir=${dir}${family ? `&family=${family}` : ''}`;
          expect(sorted.length, label).toBe(rows.filter((r) => !family || r.family === family).length);
          // The key, then energy, then id: each row after the one before it in the chosen direction.
          for (let i = 1; i < sorted.length; i++) {
            const [p, q] = [sorted[i - 1]!, sorted[i]!];
            const order = key(p, name) === key(q, name) ? (p.energy === q.energy ? 0 : p.energy - q.energy) : key(p, name) - key(q, name);
            expect(dir === 'asc' ? order <= 0 : order >= 0, `${label}: row ${i}`).toBe(true);
          }
        }
      }
    }
  });

  it('a dimension filter and a sort by the same or another dimension: the filtered rows, in order', async () => {
    const rows = await search({});
    for (const name of allDimensions) {
      const values = rows.map((r) => r.keyDimensions[name]).filter((v): v is number => v !== undefined);
      const mid = values.sort((x, y) => x - y)[Math.floor(values.length / 2)]!;
      for (const by of ['width', name, 'area']) {
        const got = await search({ [`dim.${name}.min`]: String(mid), sort: `dim.${by}`, dir: 'desc' });
        const expected = rows.filter((r) => r.keyDimensions[name] !== undefined && r.keyDimensions[name]! >= mid);
        expect(new Set(got.map((r) => r.id)), `dim.${name}.min=${mid}&sort=dim.${by}`).toEqual(new Set(expected.map((r) => r.id)));
        const keys = got.map((r) => r.keyDimensions[by] ?? Infinity);
        expect(keys, `dim.${name}.min=${mid}&sort=dim.${by}`).toEqual([...keys].sort((x, y) => y - x));
      }
    }
  });

  it('pages through a dimension sort by cursor without losing or repeating a row', async () => {
    for (const name of allDimensions) {
      const all = await search({ sort: `dim.${name}` });
      const seen: string[] = [];
      let cursor: string | undefined;
      for (let guard = 0; guard < 50; guard++) {
        const q = new URLSearchParams({ sort: `dim.${name}`, pageSize: '3', ...(cursor ? { cursor } : {}) });
        const res = await designer.get(`/api/groups/${lab.groupId}/catalogue?${q}`);
        expect(res.status, JSON.stringify(res.body)).toBe(200);
        seen.push(...(res.body.items as Row[]).map((r) => r.id));
        cursor = res.body.nextCursor ?? undefined;
        if (!cursor) break;
      }
      expect(seen, `sort=dim.${name}`).toEqual(all.map((r) => r.id));
    }
  });

  it('refuses an unknown dimension by name instead of ignoring it', async () => {
    const res = await designer.get(`/api/groups/${lab.groupId}/catalogue?dim.depth.max=3`);
    expect(res.status).toBe(400);
    expect(JSON.stringify(res.body)).toContain('dim.depth.max');
    expect(JSON.stringify(res.body)).toContain('rx');
  });

  it('a microwave model stores its mm as nm (one filter means one length)', async () => {
    const [r] = await search({ physics: 'microwave' });
    expect(r!.keyDimensions['width']).toBeCloseTo(60e6, 3);
    expect(r!.keyDimensions['height']).toBeCloseTo(40e6, 3);
  });
});

describe('lattice validity stored with every resonance', () => {
  it('stores the limit 2t(1 − cos(π/5)) and λ/a, and flags the pole above it', async () => {
    const rows = await search({ physics: 'electrons' });
    const limit = limitOf(tGaAs);
    for (const r of rows) {
      expect(r.validity.limit!).toBeCloseTo(limit, 9);
      const above = r.energy > limit;
      expect(r.validity.aboveLimit).toBe(above);
      // λ/a = 2π/acos(1 − E/(2t)): exactly 10 at the limit, more below it.
      const expected = (2 * Math.PI) / Math.acos(1 - r.energy / (2 * tGaAs));
      expect(r.validity.wavelengthSpacings!).toBeCloseTo(expected, 9);
      expect(r.validity.wavelengthSpacings! < 10).toBe(above);
    }
  });

  it('filters above and within the limit', async () => {
    const above = await search({ aboveLimit: 'true' });
    const within = await search({ aboveLimit: 'false' });
    expect(above.length).toBe(cases.length + 1);
    expect(within.length).toBe(cases.length + 1);
    expect(above.every((r) => r.validity.aboveLimit === true)).toBe(true);
    expect(within.every((r) => r.validity.aboveLimit === false)).toBe(true);
    const fewSpacings = await search({ lambdamax: '10' });
    expect(new Set(fewSpacings.map((r) => r.id))).toEqual(new Set(above.map((r) => r.id)));
  });

  it('exports the validity figures and every dimension in CSV and JSON', async () => {
    const csv = await designer.get(`/api/groups/${lab.groupId}/catalogue/export.csv?family=ellipse`);
    expect(csv.status).toBe(200);
    const parsed = Papa.parse<Record<string, string>>(csv.text, { header: true, skipEmptyLines: true });
    expect(parsed.data).toHaveLength(6);
    for (const col of ['validity_limit_meV', 'wavelength_over_spacing', 'above_validity_limit', 'rx_nm', 'ry_nm', 'inner_nm', 'outer_nm', 'area_nm2']) {
      expect(parsed.meta.fields).toContain(col);
    }
    expect(parsed.data.filter((r) => r['above_validity_limit'] === 'true')).toHaveLength(3);
    expect(parsed.data.every((r) => r['rx_nm'] !== '' && r['radius_nm'] === '')).toBe(true);
    const json = await designer.get(`/api/groups/${lab.groupId}/catalogue/export.json?aboveLimit=true`);
    const body = JSON.parse(json.text) as { units: Record<string, string>; items: Row[] };
    expect(body.units['validity']).toBeDefined();
    expect(body.items.every((r) => r.validity.aboveLimit === true)).toBe(true);
  });

  it('the back-fill gives rows written before the columns the same figures', async () => {
    const db = app.handle.db;
    const [some] = await db.select().from(resonances).where(eq(resonances.modelId, modelIds['ellipse-tall']!)).limit(1);
    const before = some!;
    await db
      .update(resonances)
      .set({ validityLimit: null, wavelengthSpacings: null, aboveValidity: null, rxNm: null, ryNm: null, areaNm2: null })
      .where(eq(resonances.id, before.id));
    // Other test files' rows (hand-made documents that do not validate) are read and skipped too.
    const done = await backfillDerivedColumns(db);
    expect(done.resonances).toBeGreaterThanOrEqual(1);
    const [after] = await db.select().from(resonances).where(eq(resonances.id, before.id));
    expect(after!.validityLimit!).toBeCloseTo(before.validityLimit!, 12);
    expect(after!.wavelengthSpacings!).toBeCloseTo(before.wavelengthSpacings!, 12);
    expect(after!.aboveValidity).toBe(before.aboveValidity);
    expect(after!.rxNm).toBe(25);
    expect(after!.ryNm).toBe(45);
    expect(after!.areaNm2).toBe(before.areaNm2);
    // A second pass leaves the filled row as it is. (Counts are not compared: other test files
    // write rows into the same database while this one runs.)
    await backfillDerivedColumns(db);
    const [twice] = await db.select().from(resonances).where(eq(resonances.id, before.id));
    expect(twice).toEqual(after);
  });
});

describe('a microwave resonance in the catalogue', () => {
  it('shows its complex frequency, Q and lifetime, with the validity limit as a frequency', async () => {
    const rows = await search({ physics: 'microwave' });
    expect(rows).toHaveLength(2);
    // f = c·√z/(2π√ε_r), c = 299.792458 mm/ns exactly (SI); z = E − iΓ/2 in mm⁻².
    const scale = 299.792458 / (2 * Math.PI * Math.sqrt(2.25));
    for (const r of rows) {
      const z = { re: r.energy, im: -1e-4 / 2 };
      const m = Math.hypot(z.re, z.im);
      const kr = Math.sqrt((m + z.re) / 2);
      const ki = Math.sqrt((m - z.re) / 2);
      expect(r.physics).toBe('microwave');
      expect(r.microwave!.frequencyGhz).toBeCloseTo(scale * kr, 9);
      expect(r.microwave!.widthMhz / 1e3).toBeCloseTo(2 * scale * ki, 9);
      expect(r.microwave!.quality! / (kr / (2 * ki))).toBeCloseTo(1, 9);
      expect(r.microwave!.lifetimeNs! * (2 * Math.PI * 2 * scale * ki)).toBeCloseTo(1, 9);
      expect(r.lifetimePs! / 1e3).toBeCloseTo(r.microwave!.lifetimeNs!, 9);
      expect(r.microwave!.validityLimitGhz!).toBeCloseTo(scale * Math.sqrt(limitOf(0.25)), 6);
    }
    const inBand = await search({ physics: 'microwave', fmax: String(scale * Math.sqrt(limitOf(0.25))) });
    expect(inBand).toHaveLength(1);
    expect(inBand[0]!.validity.aboveLimit).toBe(false);
  });
});
