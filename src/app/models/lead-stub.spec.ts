import { rasteriseShape } from '../../../shared/model/geometry';
import { validateCavityModel } from '../../../shared/model/model-validation';
import { honeycombPlacement, squarePlacement } from '../../../shared/model/lattice-geometry';
import { addLeadStub } from './lead-stub';

// An ellipse dot in a 60 × 40 grid (a = 5 nm): it touches no grid edge, so leads need stubs.
const ellipse = { kind: 'ellipse' as const, cx: 150, cy: 100, rx: 110, ry: 80 };
const nx = 60;
const ny = 40;
const a = 5;
const square = squarePlacement(a);

describe('addLeadStub', () => {
  it('joins a left lead to the ellipse so every mouth site is a cavity site and the model validates', () => {
    const lead = { side: 'left' as const, start: 15, width: 10 };
    const result = addLeadStub(ellipse, lead, nx, ny, square);
    expect(result.ok).toBe(true);
    if (!result.ok) return;
    expect(result.stub).toMatchObject({ kind: 'rectangle', x0: 0, y0: 75, height: 50 });
    const mask = rasteriseShape(result.shape, nx, ny, a);
    for (let j = 15; j < 25; j++) expect(mask[0 * ny + j]).toBe(1);
    const doc = { name: 'e', spacing: a, material: 'gaas', grid: { nx, ny }, shape: result.shape, leads: [{ side: 'left', start: 15, width: 10 }] };
    expect(validateCavityModel(doc).ok).toBe(true);
  });

  it('builds both stubs of a two-lead dot as members of one union', () => {
    const left = addLeadStub(ellipse, { side: 'left', start: 15, width: 10 }, nx, ny, square);
    if (!left.ok) throw new Error(left.reason);
    const right = addLeadStub(left.shape, { side: 'right', start: 15, width: 10 }, nx, ny, square);
    if (!right.ok) throw new Error(right.reason);
    expect(right.shape.kind).toBe('union');
    expect(right.shape.kind === 'union' && right.shape.of.length).toBe(3);
    // The right stub ends at the grid's right edge: x0 + width = nx·a.
    expect(right.stub.x0 + right.stub.width).toBeCloseTo(nx * a, 9);
    const doc = {
      name: 'e',
      spacing: a,
      material: 'gaas',
      grid: { nx, ny },
      shape: right.shape,
      leads: [
        { side: 'left', start: 15, width: 10 },
        { side: 'right', start: 15, width: 10 },
      ],
    };
    expect(validateCavityModel(doc).ok).toBe(true);
  });

  it('works on top and bottom leads too', () => {
    const top = addLeadStub(ellipse, { side: 'top', start: 25, width: 10 }, nx, ny, square);
    if (!top.ok) throw new Error(top.reason);
    expect(top.stub.y0 + top.stub.height).toBeCloseTo(ny * a, 9);
    const mask = rasteriseShape(top.shape, nx, ny, a);
    for (let i = 25; i < 35; i++) expect(mask[i * ny + ny - 1]).toBe(1);
  });

  it('says so when no stub is needed or the lead runs off the edge', () => {
    const rect = { kind: 'rectangle' as const, x0: 0, y0: 0, width: 300, height: 200 };
    const none = addLeadStub(rect, { side: 'left', start: 5, width: 10 }, nx, ny, square);
    expect(none.ok).toBe(false);
    expect(!none.ok && none.reason).toContain('no stub needed');
    const past = addLeadStub(ellipse, { side: 'left', start: 35, width: 10 }, nx, ny, square);
    expect(!past.ok && past.reason).toContain('past the end');
  });

  it('joins zigzag and armchair leads to a graphene disk on the honeycomb, so the model validates', () => {
    const acc = 0.142;
    const honeycomb = honeycombPlacement(acc);
    const [gx, gy] = [90, 50];
    const disk = { kind: 'disk' as const, cx: 5.5, cy: 5.4, radius: 3.5 };
    const leads = [
      { side: 'left' as const, start: 22, width: 6, offset: 0 },
      { side: 'top' as const, start: 40, width: 9, offset: 0 },
    ];
    let current: Parameters<typeof addLeadStub>[0] = disk;
    for (const lead of leads) {
      const joined = addLeadStub(current, lead, gx, gy, honeycomb);
      if (!joined.ok) throw new Error(joined.reason);
      current = joined.shape;
    }
    // Rows are (3/2)·a_CC apart: the left stub spans rows 22..27, from y = 22·0.213 nm.
    const left = current.kind === 'union' ? current.of[1] : null;
    expect(left).toMatchObject({ kind: 'rectangle', x0: 0 });
    expect(left && 'y0' in left ? left.y0 : NaN).toBeCloseTo(22 * 1.5 * acc, 9);
    const doc = { name: 'g', spacing: acc, lattice: { kind: 'honeycomb', hopping: 2.7 }, grid: { nx: gx, ny: gy }, shape: current, leads };
    const checked = validateCavityModel(doc);
    expect(checked.ok ? [] : checked.issues).toEqual([]);
  });
});
