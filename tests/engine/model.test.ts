import { describe, expect, it } from 'vitest';
import { formatIssuePath, type CavityModelInput, type ModelIssue } from '../../shared/model/cavity-model';
import { validateCavityModel } from '../../shared/model/model-validation';
import { rasteriseShape } from '../../shared/model/geometry';
import { deriveFigures, dispersionError } from '../../shared/model/derived-figures';
import { siteUniform } from '../../shared/model/site-noise';
import { buildCavitySystem } from '../../shared/engine/effective-hamiltonian';
import { cyclotronEnergy, hoppingEnergy } from '../../shared/units/constants';

function base(): CavityModelInput {
  return {
    name: 'box',
    spacing: 5,
    material: 'gaas',
    grid: { nx: 20, ny: 10 },
    shape: { kind: 'rectangle', x0: 0, y0: 0, width: 100, height: 50 },
    leads: [
      { side: 'left', start: 2, width: 4, name: 'source' },
      { side: 'right', start: 3, width: 5, name: 'drain' },
    ],
  };
}

function issuesOf(doc: unknown): ModelIssue[] {
  const r = validateCavityModel(doc);
  if (r.ok) throw new Error('expected the model to be invalid');
  return r.issues;
}

function count(mask: Uint8Array): number {
  let c = 0;
  for (const v of mask) c += v;
  return c;
}

describe('model document', () => {
  it('accepts a valid model and fills defaults', () => {
    const r = validateCavityModel(base());
    expect(r.ok).toBe(true);
    if (!r.ok) return;
    expect(r.siteCount).toBe(200);
    expect(r.model.field).toBe(0);
    expect(r.model.leads[0].offset).toBe(0);
  });

  it('names the lead and the site of a mouth outside the cavity', () => {
    const doc = base();
    doc.shape = { kind: 'subtract', from: doc.shape, remove: [{ kind: 'rectangle', x0: 0, y0: 20, width: 10, height: 5 }] };
    const [issue] = issuesOf(doc);
    // Named on the lead's first mouth site, so the editor shows it next to that field.
    expect(formatIssuePath(issue.path)).toBe('leads[0].start');
    expect(issue.message).toContain("lead 'source'");
    expect(issue.message).toContain('(0, 4)');
    expect(issue.message).toContain('outside the cavity');
    expect(issue.message).toMatch(/extend the cavity to the left edge/);
  });

  it('reports overlapping leads on the same edge and at a corner', () => {
    const doc = base();
    doc.leads = [
      { side: 'left', start: 0, width: 4 },
      { side: 'left', start: 3, width: 3 },
    ];
    const [issue] = issuesOf(doc);
    expect(issue.path).toEqual(['leads', 1]);
    expect(issue.message).toMatch(/overlaps .*leads\[0\].* \(0, 3\)/);

    const corner = base();
    corner.leads = [
      { side: 'left', start: 0, width: 2 },
      { side: 'bottom', start: 0, width: 2 },
    ];
    expect(issuesOf(corner)[0].message).toContain('(0, 0)');
  });

  it('reports a lead running past the end of its edge', () => {
    const doc = base();
    doc.leads = [{ side: 'top', start: 18, width: 4 }];
    const [issue] = issuesOf(doc);
    expect(formatIssuePath(issue.path)).toBe('leads[0].width');
    expect(issue.message).toContain('0..19');
  });

  it('reports a disconnected cavity with the number of parts and where they are', () => {
    const doc = base();
    doc.shape = {
      kind: 'union',
      of: [
        { kind: 'rectangle', x0: 0, y0: 0, width: 30, height: 50 },
        { kind: 'rectangle', x0: 60, y0: 0, width: 40, height: 50 },
        { kind: 'disk', cx: 45, cy: 40, radius: 1 },
      ],
    };
    const [issue] = issuesOf(doc);
    expect(issue.path).toEqual(['shape']);
    expect(issue.message).toContain('3 disconnected parts');
    expect(issue.message).toContain('(12, 0)');
    expect(issue.message).toContain('(9, 8)');
  });

  it('rejects a grid above the size cap and a cavity above the site cap', () => {
    const doc = base();
    doc.grid = { nx: 600, ny: 500 };
    const [issue] = issuesOf(doc);
    expect(issue.path).toEqual(['grid']);
    expect(issue.message).toContain('300000');

    const big = base();
    big.grid = { nx: 500, ny: 500 };
    big.shape = { kind: 'rectangle', x0: 0, y0: 0, width: 2500, height: 2500 };
    big.leads = [];
    const [siteIssue] = issuesOf(big);
    expect(siteIssue.path).toEqual(['shape']);
    expect(siteIssue.message).toContain('250000 sites');
  });

  it('rejects an empty cavity, an unknown material, a bad shape kind and bad numbers', () => {
    const empty = base();
    empty.shape = { kind: 'disk', cx: -100, cy: -100, radius: 5 };
    expect(issuesOf(empty)[0].message).toContain('empty');

    const mat = base();
    mat.material = 'unobtainium';
    const [m] = issuesOf(mat);
    expect(m.path).toEqual(['material']);
    expect(m.message).toContain("'unobtainium'");

    const kind = base() as unknown as { shape: unknown };
    kind.shape = { kind: 'union', of: [{ kind: 'hexagon' }] };
    const [k] = issuesOf(kind);
    expect(formatIssuePath(k.path)).toBe('shape.of[0].kind');
    expect(k.message).toContain("'hexagon'");

    const spacing = base();
    spacing.spacing = -1;
    expect(issuesOf(spacing)[0].path).toEqual(['spacing']);

    const site = base();
    site.shape = {
      kind: 'sites',
      list: [
        [0, 0],
        [25, 3],
      ],
    };
    site.leads = [];
    const [s] = issuesOf(site);
    expect(formatIssuePath(s.path)).toBe('shape.list[1]');
  });

  it('rasterises primitives with the documented rules', () => {
    // Half-open rectangle: width 10a covers 10 columns.
    expect(count(rasteriseShape({ kind: 'rectangle', x0: 0, y0: 0, width: 10, height: 5 }, 30, 30, 1))).toBe(50);
    // Lattice points in a disk of radius 10: 317 (Gauss circle problem, OEIS A000328; from memory).
    expect(count(rasteriseShape({ kind: 'disk', cx: 15, cy: 15, radius: 10 }, 31, 31, 1))).toBe(317);
    // The same disk as a polygon-free ellipse with rx = ry.
    expect(count(rasteriseShape({ kind: 'ellipse', cx: 15, cy: 15, rx: 10, ry: 10, angleDeg: 30 }, 31, 31, 1))).toBe(317);
    // A stadium of zero length is a disk.
    expect(count(rasteriseShape({ kind: 'stadium', cx: 15, cy: 15, length: 0, radius: 10 }, 31, 31, 1))).toBe(317);
    // Annulus 0 < r ≤ 10 removes only the centre.
    expect(count(rasteriseShape({ kind: 'annulus', cx: 15, cy: 15, inner: 0, outer: 10 }, 31, 31, 1))).toBe(316);
    // Triangle (0,0),(10,0),(0,10) in half-open even-odd: points with i, j ≥ 0, i + j < 10 → 55, boundary hypotenuse excluded.
    const tri = count(
      rasteriseShape(
        {
          kind: 'polygon',
          vertices: [
            [-0.5, -0.5],
            [10, -0.5],
            [-0.5, 10],
          ],
        },
        30,
        30,
        1,
      ),
    );
    expect(tri).toBe(55);
  });

  it('decodes a packed bitmap row by row from the bottom', () => {
    // Rows: 0b10100000 (sites 0 and 2), 0b01000000 (site 1).
    const data = btoa(String.fromCharCode(0xa0, 0x40));
    const mask = rasteriseShape({ kind: 'bitmap', i0: 1, j0: 2, width: 3, height: 2, data }, 6, 6, 1);
    const set: string[] = [];
    for (let s = 0; s < mask.length; s++) if (mask[s]) set.push(`${Math.floor(s / 6)},${s % 6}`);
    expect(set.sort()).toEqual(['1,2', '2,3', '3,2']);
  });

  it('gives a deterministic disorder field with the right spread', () => {
    const values: number[] = [];
    for (let i = 0; i < 100; i++) for (let j = 0; j < 100; j++) values.push(siteUniform(7, i, j));
    expect(siteUniform(7, 3, 4)).toBe(siteUniform(7, 3, 4));
    expect(siteUniform(7, 3, 4)).not.toBe(siteUniform(8, 3, 4));
    const mean = values.reduce((a, b) => a + b, 0) / values.length;
    const variance = values.reduce((a, b) => a + (b - mean) ** 2, 0) / values.length;
    // Uniform [0,1): mean 1/2, variance 1/12 (standard result); 1e4 samples → 3σ ≈ 0.009 on the mean.
    expect(Math.abs(mean - 0.5)).toBeLessThan(0.01);
    expect(Math.abs(variance - 1 / 12)).toBeLessThan(0.005);
    expect(Math.min(...values)).toBeGreaterThanOrEqual(0);
    expect(Math.max(...values)).toBeLessThan(1);
  });

  it('adds potential terms onto the onsite energies', () => {
    const doc = base();
    doc.potential = [
      { kind: 'block', x0: 0, y0: 0, width: 10, height: 50, value: 3 },
      { kind: 'sites', values: [[5, 5, -2]] },
      { kind: 'gaussian', cx: 50, cy: 25, sigma: 10, amplitude: 1 },
    ];
    const sys = buildCavitySystem(doc);
    const t = sys.hopping;
    const at = (i: number, j: number) => sys.lattice.onsite[sys.lattice.siteIndex[i * 10 + j]] - 4 * t;
    const g = (x: number, y: number) => Math.exp(-((x - 50) ** 2 + (y - 25) ** 2) / 200);
    expect(at(1, 3)).toBeCloseTo(3 + g(5, 15), 12);
    expect(at(2, 3)).toBeCloseTo(g(10, 15), 12);
    expect(at(5, 5)).toBeCloseTo(-2 + g(25, 25), 12);
    expect(at(10, 5)).toBeCloseTo(1, 12);
  });

  it('derives hopping, thresholds and validity figures', () => {
    const r = validateCavityModel({ ...base(), field: 1 });
    if (!r.ok) throw new Error('valid');
    const f = deriveFigures(r.model, r.siteCount, 2);
    // t = 38.09982 / 0.067 / 25 meV (contract formula).
    expect(f.hopping).toBeCloseTo(38.09982 / 0.067 / 25, 10);
    expect(f.leads[0].thresholds).toHaveLength(4);
    const t = f.hopping;
    expect(f.leads[0].thresholds[0].opens).toBeCloseTo(2 * t - 2 * t * Math.cos(Math.PI / 5), 10);
    // ħω_c at 1 T for GaAs ≈ 1.728 meV (ħe/m_e = 0.1157676 meV/T, CODATA 2018 2μ_B, over 0.067).
    expect(f.cyclotronEnergy).toBeCloseTo(1.7279, 3);
    expect(cyclotronEnergy(1, 1)).toBeCloseTo(0.115767636, 8);
    // Small-E dispersion error ≈ −E/(12t) (Taylor series of 1 − cos x, common practice, no source).
    expect(dispersionError(0.01 * t, t) / (-0.01 / 12)).toBeCloseTo(1, 2);
    expect(f.validity?.warnings).toEqual([]);
    const high = deriveFigures(r.model, r.siteCount, 0.6 * t);
    expect(high.validity?.warnings.length).toBe(2);
    // Above the band top 4t (a cosine band, common practice, no source) the warning says so instead of a NaN %.
    const beyond = deriveFigures(r.model, r.siteCount, 5 * t).validity!.warnings.join(' ');
    expect(beyond).toContain('above the top of the lattice band 4t');
    expect(beyond).not.toContain('NaN');
    expect(hoppingEnergy(5, 0.067)).toBeCloseTo(f.hopping, 12);
  });
});
