import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import type { Shape } from '../../shared/model/cavity-model';
import { validateCavityModel } from '../../shared/model/model-validation';
import { DOCUMENT_LIMITS } from '../../shared/model/document-limits';
import { rasteriseShape, rasterWork } from '../../shared/model/geometry';

const base = (shape: unknown, grid = { nx: 40, ny: 40 }) => ({ name: 'limits', spacing: 5, material: 'gaas', grid, shape });
const rect = { kind: 'rectangle', x0: 0, y0: 0, width: 100, height: 100 };

function issuesOf(doc: unknown) {
  const v = validateCavityModel(doc);
  expect(v.ok).toBe(false);
  return v.ok ? [] : v.issues;
}

describe('document limits, checked before any geometry work', () => {
  it('a union nested 1,000 deep is refused naming the depth limit (no stack overflow)', () => {
    let shape: unknown = rect;
    for (let k = 0; k < 1000; k++) shape = { kind: 'union', of: [shape] };
    const issues = issuesOf(base(shape));
    expect(issues).toHaveLength(1);
    expect(issues[0].message).toMatch(new RegExp(`more than ${DOCUMENT_LIMITS.shapeDepth} levels`));
    expect(issues[0].path.slice(0, 3)).toEqual(['shape', 'of', 0]);
  });

  it('100,000 levels of subtract nesting are refused the same way', () => {
    let shape: unknown = rect;
    for (let k = 0; k < 100_000; k++) shape = { kind: 'subtract', from: shape, remove: [] };
    expect(issuesOf(base(shape))[0].message).toMatch(/levels deep/);
  });

  it('nesting at the limit is accepted', () => {
    let shape: unknown = rect;
    for (let k = 1; k < DOCUMENT_LIMITS.shapeDepth; k++) shape = { kind: 'union', of: [shape] };
    expect(validateCavityModel(base(shape)).ok).toBe(true);
  });

  it('a polygon of 20,000 vertices is refused at its vertices, before rasterising', () => {
    const vertices = Array.from({ length: 20_000 }, (_, k) => [
      100 + 90 * Math.cos((2 * Math.PI * k) / 20_000),
      100 + 90 * Math.sin((2 * Math.PI * k) / 20_000),
    ]);
    const issues = issuesOf(base({ kind: 'polygon', vertices }, { nx: 500, ny: 500 }));
    expect(issues[0].path).toEqual(['shape', 'vertices']);
    expect(issues[0].message).toMatch(/20000 vertices, above the limit of 4096/);
  });

  it('too many union members, shapes, explicit sites, potential terms or leads are refused with the field path', () => {
    const many = Array.from({ length: DOCUMENT_LIMITS.shapeMembers + 1 }, () => rect);
    expect(issuesOf(base({ kind: 'union', of: many }))[0].path).toEqual(['shape', 'of']);
    const list = Array.from({ length: DOCUMENT_LIMITS.explicitSites + 1 }, (_, k) => [k % 40, 0]);
    expect(issuesOf(base({ kind: 'sites', list }))[0].path).toEqual(['shape', 'list']);
    const terms = Array.from({ length: DOCUMENT_LIMITS.potentialTerms + 1 }, () => ({ kind: 'disorder', strength: 1, seed: 1 }));
    expect(issuesOf({ ...base(rect), potential: terms })[0].path).toEqual(['potential']);
    const leads = Array.from({ length: DOCUMENT_LIMITS.leads + 1 }, (_, k) => ({ side: 'left', start: k, width: 1 }));
    expect(issuesOf({ ...base(rect), leads })[0].path).toEqual(['leads']);
    // 64 unions of 64 members: 4,160 shapes
    const wide = { kind: 'union', of: Array.from({ length: 64 }, () => ({ kind: 'union', of: Array.from({ length: 64 }, () => rect) })) };
    expect(issuesOf(base(wide))[0].message).toMatch(/more than 256 shapes/);
  });

  it('a document whose rasterisation would exceed the work limit is refused naming the shape', () => {
    // 4 × 60 disks each covering a 500×500 grid: about 1.2·10⁸ site tests
    const disks = Array.from({ length: 60 }, (_, k) => ({ kind: 'disk', cx: 1250 + k, cy: 1250, radius: 1200 }));
    const shape = { kind: 'union', of: [1, 2, 3, 4].map(() => ({ kind: 'union', of: disks })) };
    const issues = issuesOf(base(shape, { nx: 500, ny: 500 }));
    expect(issues[0].path).toEqual(['shape']);
    expect(issues[0].message).toMatch(/site tests, above the limit/);
  });
});

/** The per-site even-odd crossing rule the row-scan fill must reproduce exactly (common practice, no source). */
function insideReference(v: [number, number][], x: number, y: number): boolean {
  let inside = false;
  for (let k = 0, l = v.length - 1; k < v.length; l = k++) {
    const [xk, yk] = v[k];
    const [xl, yl] = v[l];
    if (yk > y !== yl > y && x < ((xl - xk) * (y - yk)) / (yl - yk) + xk) inside = !inside;
  }
  return inside;
}

describe('field and spacing limits', () => {
  const box = {
    name: 'x',
    spacing: 5,
    material: 'gaas',
    grid: { nx: 30, ny: 20 },
    shape: { kind: 'rectangle', x0: 0, y0: 0, width: 150, height: 100 },
    leads: [{ side: 'left', start: 5, width: 8 }],
  };
  const issues = (doc: object) => {
    const r = validateCavityModel(doc);
    return r.ok ? [] : r.issues.map((i) => `${i.path.join('.')}: ${i.message}`);
  };

  it('refuses a field or a spacing whose figures would not be finite numbers, naming the field', () => {
    // Found by the input fuzz: B = 1e308 T made the flux per plaquette infinite (null in JSON).
    expect(issues({ ...box, field: 1e308 })).toEqual([`field: must be at most ${DOCUMENT_LIMITS.fieldTesla.toLocaleString('en-US')} T`]);
    expect(issues({ ...box, field: -1e308 })[0]).toMatch(/^field: must be at least/);
    expect(issues({ ...box, spacing: 1e-300 })).toEqual([`spacing: must be at least ${DOCUMENT_LIMITS.smallestSpacing} (nm, or mm for a resonator)`]);
    // Spacing 0 keeps its one message (the limit does not add a second).
    expect(issues({ ...box, spacing: 0 }).filter((m) => m.startsWith('spacing'))).toHaveLength(1);
    // Inside the limits nothing changes: graphene's 0.142 nm and the lattice tests' 3,000 T pass.
    expect(issues({ ...box, field: 3000 })).toEqual([]);
    expect(issues({ ...box, spacing: 0.142, grid: { nx: 30, ny: 20 }, shape: { kind: 'rectangle', x0: 0, y0: 0, width: 4, height: 2.8 } })).toEqual([]);
  });
});

describe('polygon rasterisation by rows', () => {
  it('marks exactly the sites of the per-site crossing rule, for random (also self-crossing) polygons', () => {
    const coord = fc.double({ min: -20, max: 140, noNaN: true });
    // Vertices on lattice points too (multiples of a = 5), where the half-open rule matters.
    const onLattice = fc.integer({ min: -4, max: 28 }).map((k) => 5 * k);
    const vertex = fc.tuple(fc.oneof(coord, onLattice), fc.oneof(coord, onLattice));
    fc.assert(
      fc.property(fc.array(vertex, { minLength: 3, maxLength: 12 }), (vertices) => {
        const nx = 25,
          ny = 22,
          a = 5;
        const mask = rasteriseShape({ kind: 'polygon', vertices } as Shape, nx, ny, a);
        for (let i = 0; i < nx; i++) {
          for (let j = 0; j < ny; j++) {
            if (mask[i * ny + j] !== (insideReference(vertices, i * a, j * a) ? 1 : 0)) return false;
          }
        }
        return true;
      }),
      { numRuns: 300 },
    );
  });

  it('rasterWork counts a polygon by rows, not sites × vertices', () => {
    const n = 4096;
    const vertices = Array.from({ length: n }, (_, k) => [1250 + 1240 * Math.cos((2 * Math.PI * k) / n), 1250 + 1240 * Math.sin((2 * Math.PI * k) / n)]);
    const work = rasterWork({ kind: 'polygon', vertices } as Shape, 500, 500, 5);
    expect(work).toBeLessThan(DOCUMENT_LIMITS.rasterWork);
    expect(work).toBeGreaterThan(500 * n);
  });
});
