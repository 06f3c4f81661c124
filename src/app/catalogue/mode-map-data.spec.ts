import type { ModeMapPayload } from '../../../shared/api/mode-maps';
import { currentArrows, decodeModeMap, drawY, glyphPath, scaleBarLength, valleyColour } from './mode-map-data';

function b64(values: number[]): string {
  const bytes = new Uint8Array(Float32Array.from(values).buffer);
  return btoa(String.fromCharCode(...bytes));
}

/** A 3 × 2 grid with the site (1, 1) missing: five sites in (i, j) order. */
function payload(): ModeMapPayload {
  // Bits i·ny + j: (0,0) (0,1) (1,0) (2,0) (2,1) set, (1,1) = bit 3 clear → 1110 1100.
  const mask = btoa(String.fromCharCode(0b11101100));
  return {
    engineVersion: 'test',
    state: { kind: 'pole', energy: 3, width: 0.1, label: '' },
    unit: '1/ps',
    spacingNm: 5,
    grid: { nx: 3, ny: 2 },
    mask,
    psi: b64([1, 0, 0, 1, 0.5, 0, 0, 0, 0, -2]),
    vectors: b64([1, 0, 1, 0, 1, 0, 0, 0, 0, 0]),
    leads: [],
    kirchhoffResidual: null,
    ldos: null,
    husimi: null,
  };
}

/**
 * A 4 × 2 honeycomb grid, every site set, a_CC = 0.142 nm (graphene's carbon–carbon
 * distance, common value, no source needed beyond the demo model). Brick-wall placement
 * as in docs/physics-model.md, "Lattices": x = i·(√3/2)a_CC, y = j·1.5·a_CC, + a_CC/2 on odd i + j.
 */
function honeycombPayload(): ModeMapPayload {
  const n = 8;
  // Current +x on column 0 and 1 of row 0 only (sites (0,0) and (1,0): indices 0 and 2).
  const vec = new Array(2 * n).fill(0);
  vec[0] = 1;
  vec[4] = 1;
  return { ...payload(), spacingNm: 0.142, lattice: 'honeycomb', grid: { nx: 4, ny: 2 }, mask: btoa(String.fromCharCode(0xff)), psi: b64(new Array(2 * n).fill(0.5)), vectors: b64(vec) };
}

describe('mode-map data', () => {
  it('places honeycomb sites at their brick-wall positions, not at (i·a_CC, j·a_CC)', () => {
    const f = decodeModeMap(honeycombPayload());
    const acc = 0.142;
    expect(f.lattice).toBe('honeycomb');
    expect(f.dx).toBeCloseTo(0.1229756, 6);
    expect(f.dy).toBeCloseTo(0.213, 9);
    // Sites in (i, j) order: (0,0) (0,1) (1,0) (1,1) (2,0) …; (0,1) and (1,0) are odd (B), lifted by a_CC/2.
    expect(f.x[2]).toBeCloseTo(0.1229756, 6);
    expect(f.y[2]).toBeCloseTo(acc / 2, 6);
    expect(f.y[1]).toBeCloseTo(0.213 + acc / 2, 6);
    expect(f.y[3]).toBeCloseTo(0.213, 6);
    expect(f.x[6]).toBeCloseTo(3 * 0.1229756, 6);
    // The top row is drawn at Y = 0, the bottom row at Y = Δy (one row pitch down).
    expect(drawY(f, f.y[3])).toBeCloseTo(0, 9);
    expect(drawY(f, f.y[0])).toBeCloseTo(0.213, 9);
  });

  it('draws a honeycomb arrow at the mean real position of its block', () => {
    const f = decodeModeMap(honeycombPayload());
    // Blocks of 2 columns × 1 row: the block (0,0), (1,0) carries the current.
    const [arrow, ...rest] = currentArrows(f, 2, 1);
    expect(rest).toHaveLength(0);
    expect(arrow.x).toBeCloseTo(0.1229756 / 2, 6);
    expect(arrow.y).toBeCloseTo(0.213 - 0.142 / 4, 6);
    expect(arrow.ux).toBe(1);
  });

  it('keeps the square lattice at (i·a, j·a) when the payload names no lattice', () => {
    const f = decodeModeMap(payload());
    expect(f.lattice).toBe('square');
    expect([f.dx, f.dy]).toEqual([5, 5]);
    expect(Array.from(f.x)).toEqual([0, 0, 5, 10, 10]);
    expect(Array.from(f.y)).toEqual([0, 5, 0, 0, 5]);
    const [arrow] = currentArrows(f, 2);
    // Block (0,0), (0,1), (1,0): mean position (5/3, 5/3) nm, drawn at Y = 5 − 5/3.
    expect(arrow.x).toBeCloseTo(5 / 3, 6);
    expect(arrow.y).toBeCloseTo(10 / 3, 6);
  });

  it('decodes the mask and the per-site arrays in lexicographic (i, j) order', () => {
    const f = decodeModeMap(payload());
    expect(Array.from(f.i)).toEqual([0, 0, 1, 2, 2]);
    expect(Array.from(f.j)).toEqual([0, 1, 0, 0, 1]);
    expect(f.siteOf[1 * 2 + 1]).toBe(-1);
    expect(f.density[4]).toBeCloseTo(4, 6);
    expect(f.phase[1]).toBeCloseTo(Math.PI / 2, 6);
    expect(f.phase[4]).toBeCloseTo(-Math.PI / 2, 6);
  });

  it('averages the current over blocks whose size follows the stride, y drawn downwards', () => {
    const f = decodeModeMap(payload());
    const fine = currentArrows(f, 1);
    expect(fine).toHaveLength(3);
    expect(fine.every((a) => a.ux === 1 && a.uy === 0)).toBe(true);
    const coarse = currentArrows(f, 2);
    expect(coarse.length).toBeLessThan(fine.length);
    // The block of sites (0,0), (0,1), (1,0) has mean (1, 0), the largest; the other block carries none.
    expect(coarse[0].length).toBeCloseTo(1, 6);
  });

  it('picks a round scale bar and draws a closed glyph', () => {
    expect(scaleBarLength(150)).toBe(20);
    expect(scaleBarLength(1000)).toBe(200);
    expect(scaleBarLength(37)).toBe(5);
    const h = { x: new Float32Array([0]), y: new Float32Array([0]), directions: [0, Math.PI / 2, Math.PI, (3 * Math.PI) / 2], distribution: new Float32Array([1, 0, 0, 0]), peaks: [], strength: new Float32Array([1]), maxP: 1, valley: null, valleyShare: null, emptyPoints: 0 };
    expect(glyphPath(h, 0, 10, 10, 4)).toMatch(/^M14\.00,10\.00L10\.00,10\.00.*Z$/);
  });

  it("draws one valley of a honeycomb Husimi map from that valley's own rows and peaks", () => {
    // Two points, four directions: valley K all along +x at point 0, K′ along +y at point 1; point 1 also has some K.
    const k = [1, 0, 0, 0, 0.2, 0, 0, 0];
    const k2 = [0, 0, 0, 0, 0, 0.6, 0, 0];
    const husimi = {
      sigmaNm: 1,
      gridNm: 1,
      directions: [0, Math.PI / 2, Math.PI, (3 * Math.PI) / 2],
      angularResolution: 0.2,
      meanWavenumber: 2,
      peakThreshold: 0.3,
      points: b64([0.1, 0.1, 0.3, 0.1]),
      distribution: b64(k.map((v, n) => v + k2[n])),
      vectorSum: b64([0, 0, 0, 0]),
      kineticEnergy: b64([500, 500]),
      peaks: [
        { point: 0, angle: 0, share: 1 },
        { point: 1, angle: Math.PI / 2, share: 0.75 },
      ],
      diracEnergy: 0,
      carrier: b64([1, 1]),
      valleyShare: b64([1, 0.25]),
      valleys: [
        { name: 'K' as const, centre: [17, 0] as [number, number], distribution: b64(k), vectorSum: b64([0, 0, 0, 0]), peaks: [{ point: 0, angle: 0, share: 1 }] },
        { name: 'K′' as const, centre: [-17, 0] as [number, number], distribution: b64(k2), vectorSum: b64([0, 0, 0, 0]), peaks: [{ point: 1, angle: Math.PI / 2, share: 1 }] },
      ],
    };
    const p = { ...honeycombPayload(), husimi };
    const both = decodeModeMap(p).husimi!;
    expect(both.valley).toBe('both');
    expect(both.distribution[5]).toBeCloseTo(0.6, 6);
    expect(both.distribution[4]).toBeCloseTo(0.2, 6);
    expect(both.peaks).toHaveLength(2);
    expect(Array.from(both.valleyShare!)).toEqual([1, 0.25]);
    const other = decodeModeMap(p, p.husimi, 'K′').husimi!;
    expect(other.valley).toBe('K′');
    expect(other.distribution[4]).toBe(0);
    expect(other.distribution[0]).toBe(0);
    expect(other.peaks).toEqual([{ point: 1, angle: Math.PI / 2, share: 1 }]);
    // Point 0 has no K′ at all: its glyph has zero strength in that valley.
    expect(other.strength[0]).toBe(0);
    expect(decodeModeMap(p, p.husimi, 'K').husimi!.peaks).toEqual([{ point: 0, angle: 0, share: 1 }]);
    expect(decodeModeMap(payload()).husimi).toBeNull();
  });

  it('tints a glyph from orange (all K) to blue (all K′) and leaves an empty point untinted', () => {
    expect(valleyColour(1)).toBe('rgb(254,97,0)');
    expect(valleyColour(0)).toBe('rgb(100,143,255)');
    expect(valleyColour(NaN)).toBeNull();
  });
});
