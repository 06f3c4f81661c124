import { describe, expect, it } from 'vitest';
import { cscFromTriplets } from '../../shared/engine/complex-csc';
import { invertPermutation, nestedDissectionOrder, symmetricAdjacency } from '../../shared/engine/ordering';
import { SparseLuPlan } from '../../shared/engine/sparse-lu';

/** Pattern of a lattice cavity given by a mask, with optional dense mouth blocks on the left and right. */
function maskPattern(nx: number, ny: number, inside: (i: number, j: number) => boolean, mouth = 0) {
  const id = new Int32Array(nx * ny).fill(-1);
  const si: number[] = [];
  const sj: number[] = [];
  for (let i = 0; i < nx; i++) {
    for (let j = 0; j < ny; j++) {
      if (!inside(i, j)) continue;
      id[i * ny + j] = si.length;
      si.push(i);
      sj.push(j);
    }
  }
  const n = si.length;
  const rows: number[] = [];
  const cols: number[] = [];
  const link = (a: number, b: number): void => {
    rows.push(a, b);
    cols.push(b, a);
  };
  for (let v = 0; v < n; v++) {
    rows.push(v);
    cols.push(v);
    const i = si[v],
      j = sj[v];
    if (i + 1 < nx && id[(i + 1) * ny + j] >= 0) link(v, id[(i + 1) * ny + j]);
    if (j + 1 < ny && id[i * ny + j + 1] >= 0) link(v, id[i * ny + j + 1]);
  }
  if (mouth > 0) {
    const j0 = Math.floor((ny - mouth) / 2);
    for (const i of [0, nx - 1]) {
      for (let p = 0; p < mouth; p++) {
        for (let q = 0; q < mouth; q++) {
          const a = id[i * ny + j0 + p],
            b = id[i * ny + j0 + q];
          if (a >= 0 && b >= 0) {
            rows.push(a);
            cols.push(b);
          }
        }
      }
    }
  }
  const a = cscFromTriplets(
    n,
    rows,
    cols,
    rows.map(() => 1),
    rows.map(() => 0),
  );
  return { a, sites: { i: Int32Array.from(si), j: Int32Array.from(sj) } };
}

function expectPermutation(p: Int32Array, n: number): void {
  expect(p.length).toBe(n);
  const seen = new Uint8Array(n);
  for (let k = 0; k < n; k++) {
    expect(p[k] >= 0 && p[k] < n).toBe(true);
    expect(seen[p[k]]).toBe(0);
    seen[p[k]] = 1;
  }
}

const shapes: Array<[string, number, number, (i: number, j: number) => boolean, number]> = [
  ['rectangle 40×30 with mouths', 40, 30, () => true, 10],
  ['disk of radius 15', 31, 31, (i, j) => (i - 15) ** 2 + (j - 15) ** 2 <= 225, 0],
  ['two disconnected blocks', 30, 12, (i) => i < 13 || i > 16, 4],
  ['single row', 50, 1, () => true, 0],
];

describe('nested-dissection ordering', () => {
  for (const [name, nx, ny, inside, mouth] of shapes) {
    it(`is a permutation (geometric and graph-based): ${name}`, () => {
      const { a, sites } = maskPattern(nx, ny, inside, mouth);
      const g = symmetricAdjacency(a.n, a.colPtr, a.rowIdx);
      expectPermutation(nestedDissectionOrder(g, sites), a.n);
      expectPermutation(nestedDissectionOrder(g), a.n);
    });
  }

  it('reduces fill against the natural ordering on a lattice with dense lead mouths', () => {
    const { a, sites } = maskPattern(90, 60, () => true, 20);
    const n = a.n;
    const natural = SparseLuPlan.analyse(n, a.colPtr, a.rowIdx, { permutation: Int32Array.from({ length: n }, (_, k) => k) });
    const geometric = SparseLuPlan.analyse(n, a.colPtr, a.rowIdx, { sites });
    const graph = SparseLuPlan.analyse(n, a.colPtr, a.rowIdx);
    // Natural (banded, bandwidth 60) ordering: about 2·n·60 factor entries; nested dissection
    // on a 2D grid is O(n log n) (George 1973). The factor 2 margin is ours, not a published bound.
    expect(natural.factorNonzeros).toBeGreaterThan(1.5 * n * 60);
    expect(geometric.factorNonzeros).toBeLessThan(natural.factorNonzeros / 2);
    expect(graph.factorNonzeros).toBeLessThan(natural.factorNonzeros / 2);
    expect(geometric.factorFlops).toBeLessThan(natural.factorFlops / 4);
  });

  it('keeps the dense mouth blocks from blowing up the fill', () => {
    // The mouth blocks cross any horizontal grid line: a separator that ignored them
    // would not separate and the fill would jump. With repair it stays near the plain lattice.
    const plain = maskPattern(60, 60, () => true, 0);
    const leads = maskPattern(60, 60, () => true, 20);
    const p = SparseLuPlan.analyse(plain.a.n, plain.a.colPtr, plain.a.rowIdx, { sites: plain.sites });
    const l = SparseLuPlan.analyse(leads.a.n, leads.a.colPtr, leads.a.rowIdx, { sites: leads.sites });
    // Two 20×20 blocks add at most 2·20² = 800 entries each to L and U before fill (common practice, no source).
    expect(l.factorNonzeros).toBeLessThan(1.3 * p.factorNonzeros);
  });
});

describe('ordering helpers', () => {
  it('symmetric adjacency: sorted, no diagonal, symmetric, duplicates merged', () => {
    // Unsymmetric pattern: (1,0) only, (0,2) and (2,0), (2,2).
    const a = cscFromTriplets(3, [1, 2, 0, 2], [0, 0, 2, 2], [1, 1, 1, 1], [0, 0, 0, 0]);
    const g = symmetricAdjacency(3, a.colPtr, a.rowIdx);
    expect(Array.from(g.ptr)).toEqual([0, 2, 3, 4]);
    expect(Array.from(g.adj)).toEqual([1, 2, 0, 0]);
  });

  it('invertPermutation rejects a repeated index', () => {
    expect(Array.from(invertPermutation([2, 0, 1]))).toEqual([1, 2, 0]);
    expect(() => invertPermutation([0, 2, 2])).toThrow(/index 2 appears twice/);
  });
});
