import { describe, expect, it } from 'vitest';
import { cscFromTriplets, cscMultiply } from '../../shared/engine/complex-csc';
import { minimumDegreeOrder } from '../../shared/engine/minimum-degree';
import { symmetricAdjacency, type Adjacency } from '../../shared/engine/ordering';
import { SparseLuPlan } from '../../shared/engine/sparse-lu';

/** Deterministic pseudo-random numbers (common practice, no source). */
function lcg(seed: number): () => number {
  let s = seed >>> 0;
  return () => {
    s = (Math.imul(s, 1664525) + 1013904223) >>> 0;
    return s / 4294967296;
  };
}

function graphOf(n: number, edges: [number, number][]): Adjacency {
  const rows: number[] = [];
  const cols: number[] = [];
  for (let v = 0; v < n; v++) {
    rows.push(v);
    cols.push(v);
  }
  for (const [a, b] of edges) {
    rows.push(a, b);
    cols.push(b, a);
  }
  const a = cscFromTriplets(
    n,
    rows,
    cols,
    rows.map(() => 1),
    rows.map(() => 0),
  );
  return symmetricAdjacency(n, a.colPtr, a.rowIdx);
}

/**
 * Fill of the symmetric elimination in this order, counted independently by the
 * elimination game on explicit neighbour sets (Parter 1961; George & Liu 1981, ch. 5):
 * eliminating v joins all its later neighbours pairwise. O(n³) at worst: small graphs only.
 */
function fillCount(g: Adjacency, perm: Int32Array): number {
  const nb: Set<number>[] = [];
  for (let v = 0; v < g.n; v++) nb.push(new Set(Array.from(g.adj.subarray(g.ptr[v], g.ptr[v + 1]))));
  const gone = new Uint8Array(g.n);
  let fill = 0;
  for (const v of perm) {
    gone[v] = 1;
    const later = [...nb[v]].filter((u) => !gone[u]);
    for (let x = 0; x < later.length; x++) {
      for (let y = x + 1; y < later.length; y++) {
        const a = later[x],
          b = later[y];
        if (!nb[a].has(b)) {
          nb[a].add(b);
          nb[b].add(a);
          fill++;
        }
      }
    }
  }
  return fill;
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

/** A grid nx × ny (5-point) with a dense block on `mouth` sites of each side column, labels shuffled. */
function gridWithMouths(nx: number, ny: number, mouth: number, seed: number): { n: number; edges: [number, number][] } {
  const n = nx * ny;
  const rnd = lcg(seed);
  const label = Array.from({ length: n }, (_, k) => k);
  for (let k = n - 1; k > 0; k--) {
    const r = Math.floor(rnd() * (k + 1));
    [label[k], label[r]] = [label[r], label[k]];
  }
  const id = (i: number, j: number): number => label[j * nx + i];
  const edges: [number, number][] = [];
  for (let j = 0; j < ny; j++) {
    for (let i = 0; i < nx; i++) {
      if (i + 1 < nx) edges.push([id(i, j), id(i + 1, j)]);
      if (j + 1 < ny) edges.push([id(i, j), id(i, j + 1)]);
    }
  }
  const j0 = Math.floor((ny - mouth) / 2);
  for (const i of [0, nx - 1]) for (let p = 0; p < mouth; p++) for (let q = p + 1; q < mouth; q++) edges.push([id(i, j0 + p), id(i, j0 + q)]);
  return { n, edges };
}

describe('approximate minimum-degree ordering', () => {
  it('is a permutation, also for an isolated vertex, a clique and a disconnected graph', () => {
    expectPermutation(minimumDegreeOrder(graphOf(1, [])), 1);
    const clique: [number, number][] = [];
    for (let a = 0; a < 7; a++) for (let b = a + 1; b < 7; b++) clique.push([a, b]);
    expectPermutation(minimumDegreeOrder(graphOf(7, clique)), 7);
    expectPermutation(
      minimumDegreeOrder(
        graphOf(9, [
          [0, 1],
          [1, 2],
          [4, 5],
          [6, 7],
          [7, 8],
          [8, 6],
        ]),
      ),
      9,
    );
    const g = gridWithMouths(23, 17, 6, 3);
    expectPermutation(minimumDegreeOrder(graphOf(g.n, g.edges)), g.n);
  });

  it('creates no fill on trees (a leaf always has the smallest degree), where the reverse order fills', () => {
    // star: eliminating the hub first joins every leaf to every other
    const star: [number, number][] = Array.from({ length: 12 }, (_, k) => [5, k < 5 ? k : k + 1] as [number, number]);
    const gs = graphOf(13, star);
    expect(fillCount(gs, minimumDegreeOrder(gs))).toBe(0);
    expect(fillCount(gs, Int32Array.from([5, ...Array.from({ length: 13 }, (_, k) => k).filter((k) => k !== 5)]))).toBe(66);
    // a random tree on 200 vertices
    const rnd = lcg(11);
    const tree: [number, number][] = [];
    for (let v = 1; v < 200; v++) tree.push([v, Math.floor(rnd() * v)]);
    const gt = graphOf(200, tree);
    expect(fillCount(gt, minimumDegreeOrder(gt))).toBe(0);
  });

  it('fills a lattice with lead mouths less than the natural order, and no more than twice nested dissection', () => {
    const g = gridWithMouths(24, 20, 7, 5);
    const graph = graphOf(g.n, g.edges);
    const md = fillCount(graph, minimumDegreeOrder(graph));
    // the order of the (shuffled) labels: the natural order of an unstructured numbering
    const natural = fillCount(
      graph,
      Int32Array.from({ length: g.n }, (_, k) => k),
    );
    expect(md).toBeLessThan(natural / 2);
    // a regular grid's fill under minimum degree is of the order of nested dissection's (George & Liu 1981, ch. 8)
    const rows: number[] = [];
    const cols: number[] = [];
    for (let v = 0; v < g.n; v++) {
      rows.push(v);
      cols.push(v);
    }
    for (const [a, b] of g.edges) {
      rows.push(a, b);
      cols.push(b, a);
    }
    const a = cscFromTriplets(
      g.n,
      rows,
      cols,
      rows.map(() => 1),
      rows.map(() => 0),
    );
    const nd = SparseLuPlan.analyse(g.n, a.colPtr, a.rowIdx, { ordering: 'nested-dissection' });
    expect(fillCount(graph, minimumDegreeOrder(graph))).toBe(md); // the same order each time
    expect(md).toBeLessThan(2 * fillCount(graph, nd.perm));
  });

  it('gives factors that solve, and the plan keeps the ordering that predicts fewer flops', () => {
    const g = gridWithMouths(30, 26, 9, 7);
    const rnd = lcg(23);
    const rows: number[] = [];
    const cols: number[] = [];
    const re: number[] = [];
    const im: number[] = [];
    for (let v = 0; v < g.n; v++) {
      rows.push(v);
      cols.push(v);
      re.push(4.2 - rnd());
      im.push(-0.05);
    }
    for (const [a, b] of g.edges) {
      rows.push(a, b);
      cols.push(b, a);
      re.push(-1 + 0.1 * rnd(), -1 + 0.1 * rnd());
      im.push(-0.1 * rnd(), -0.1 * rnd());
    }
    const a = cscFromTriplets(g.n, rows, cols, re, im);
    const plans = {
      auto: SparseLuPlan.analyse(g.n, a.colPtr, a.rowIdx),
      nd: SparseLuPlan.analyse(g.n, a.colPtr, a.rowIdx, { ordering: 'nested-dissection' }),
      md: SparseLuPlan.analyse(g.n, a.colPtr, a.rowIdx, { ordering: 'minimum-degree' }),
    };
    expect(plans.auto.factorFlops).toBe(Math.min(plans.nd.factorFlops, plans.md.factorFlops));
    const x = new Float64Array(2 * g.n).map((_, k) => Math.sin(0.37 * k + 1));
    const b = cscMultiply(a, x);
    for (const plan of Object.values(plans)) {
      const y = plan.factor(a.values).solve(b.slice());
      let err = 0;
      let norm = 0;
      for (let k = 0; k < x.length; k++) {
        err += (y[k] - x[k]) ** 2;
        norm += x[k] ** 2;
      }
      expect(Math.sqrt(err / norm)).toBeLessThan(1e-12);
    }
    expect(() => SparseLuPlan.analyse(g.n, a.colPtr, a.rowIdx, { ordering: 'fastest' as never })).toThrow(/ordering must be/);
  });
});
