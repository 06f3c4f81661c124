import type { ModeMapPayload } from '../../../shared/api/mode-maps';
import { currentArrows, decodeModeMap, glyphPath, scaleBarLength } from './mode-map-data';

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

describe('mode-map data', () => {
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
    const h = { x: new Float32Array([0]), y: new Float32Array([0]), directions: [0, Math.PI / 2, Math.PI, (3 * Math.PI) / 2], distribution: new Float32Array([1, 0, 0, 0]), peaks: [], strength: new Float32Array([1]), maxP: 1 };
    expect(glyphPath(h, 0, 10, 10, 4)).toMatch(/^M14\.00,10\.00L10\.00,10\.00.*Z$/);
  });
});
