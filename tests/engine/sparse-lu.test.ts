import { LuDecomposition, Matrix } from 'ml-matrix';
import { describe, expect, it } from 'vitest';
import { cscFromTriplets, cscMultiply, type ComplexCsc } from '../../shared/engine/complex-csc';
import { SingularMatrixError, SparseLuPlan } from '../../shared/engine/sparse-lu';

/** Park–Miller generator, so every run sees the same matrices. */
function rng(seed: number): () => number {
  let s = seed;
  return () => {
    s = (s * 16807) % 2147483647;
    return s / 2147483647 - 0.5;
  };
}

interface LatticeOptions {
  nx: number;
  ny: number;
  /** Width of the left and right lead mouths (dense random blocks), 0 for none. */
  mouth?: number;
  /** Diagonal values: 'shifted' (4 − z plus noise), 'zero' (every diagonal entry 0), 'tiny' (1e-13 scale). */
  diagonal?: 'shifted' | 'zero' | 'tiny';
  seed?: number;
}

/** A lattice-pattern matrix with independent (non-symmetric) random complex values. */
function latticeMatrix(o: LatticeOptions): { a: ComplexCsc; sites: { i: Int32Array; j: Int32Array } } {
  const { nx, ny, mouth = 0, diagonal = 'shifted' } = o;
  const rnd = rng(o.seed ?? 7);
  const n = nx * ny;
  const id = (i: number, j: number): number => j * nx + i;
  const rows: number[] = [];
  const cols: number[] = [];
  const re: number[] = [];
  const im: number[] = [];
  const add = (r: number, c: number, a: number, b: number): void => {
    rows.push(r);
    cols.push(c);
    re.push(a);
    im.push(b);
  };
  const si = new Int32Array(n);
  const sj = new Int32Array(n);
  for (let j = 0; j < ny; j++) {
    for (let i = 0; i < nx; i++) {
      const v = id(i, j);
      si[v] = i;
      sj[v] = j;
      if (diagonal === 'shifted') add(v, v, 2.7 + 0.5 * rnd(), 0.2 * rnd());
      else if (diagonal === 'tiny') add(v, v, 1e-13 * rnd(), 1e-13 * rnd());
      else add(v, v, 0, 0);
      if (i + 1 < nx) {
        add(v, id(i + 1, j), -1 + 0.3 * rnd(), 0.3 * rnd());
        add(id(i + 1, j), v, -1 + 0.3 * rnd(), 0.3 * rnd());
      }
      if (j + 1 < ny) {
        add(v, id(i, j + 1), -1 + 0.3 * rnd(), 0.3 * rnd());
        add(id(i, j + 1), v, -1 + 0.3 * rnd(), 0.3 * rnd());
      }
    }
  }
  if (mouth > 0) {
    const j0 = Math.floor((ny - mouth) / 2);
    for (const i of [0, nx - 1]) {
      for (let p = 0; p < mouth; p++) for (let q = 0; q < mouth; q++) add(id(i, j0 + p), id(i, j0 + q), 0.5 * rnd(), 0.5 * rnd());
    }
  }
  return { a: cscFromTriplets(n, rows, cols, re, im), sites: { i: si, j: sj } };
}

function randomVector(len: number, seed: number): Float64Array {
  const rnd = rng(seed);
  const v = new Float64Array(len);
  for (let q = 0; q < len; q++) v[q] = 2 * rnd();
  return v;
}

function norm(v: Float64Array): number {
  let s = 0;
  for (let q = 0; q < v.length; q++) s += v[q] * v[q];
  return Math.sqrt(s);
}

/** ‖A x − b‖ / ‖b‖, with Aᵀ instead of A when transpose is set (computed independently of the LU). */
function residual(a: ComplexCsc, x: Float64Array, b: Float64Array, transpose = false): number {
  let ax: Float64Array;
  if (!transpose) ax = cscMultiply(a, x);
  else {
    ax = new Float64Array(2 * a.n);
    for (let c = 0; c < a.n; c++) {
      for (let e = a.colPtr[c]; e < a.colPtr[c + 1]; e++) {
        const r = a.rowIdx[e];
        const vr = a.values[2 * e],
          vi = a.values[2 * e + 1];
        ax[2 * c] += vr * x[2 * r] - vi * x[2 * r + 1];
        ax[2 * c + 1] += vr * x[2 * r + 1] + vi * x[2 * r];
      }
    }
  }
  for (let q = 0; q < ax.length; q++) ax[q] -= b[q];
  return norm(ax) / norm(b);
}

function toDense(a: ComplexCsc): { re: number[][]; im: number[][] } {
  const re = Array.from({ length: a.n }, () => new Array<number>(a.n).fill(0));
  const im = Array.from({ length: a.n }, () => new Array<number>(a.n).fill(0));
  for (let c = 0; c < a.n; c++) {
    for (let e = a.colPtr[c]; e < a.colPtr[c + 1]; e++) {
      re[a.rowIdx[e]][c] = a.values[2 * e];
      im[a.rowIdx[e]][c] = a.values[2 * e + 1];
    }
  }
  return { re, im };
}

/**
 * Reference log-determinant by textbook Gaussian elimination with partial pivoting
 * (Golub & Van Loan, "Matrix Computations", 4th ed., Alg. 3.4.1), written here
 * independently of the engine: log|det| and arg det (not reduced).
 */
function denseLogDet(m: { re: number[][]; im: number[][] }): { logAbs: number; arg: number } {
  const n = m.re.length;
  const ar = m.re.map((r) => r.slice());
  const ai = m.im.map((r) => r.slice());
  let logAbs = 0;
  let arg = 0;
  for (let k = 0; k < n; k++) {
    let p = k;
    for (let r = k + 1; r < n; r++) if (Math.hypot(ar[r][k], ai[r][k]) > Math.hypot(ar[p][k], ai[p][k])) p = r;
    if (p !== k) {
      [ar[p], ar[k]] = [ar[k], ar[p]];
      [ai[p], ai[k]] = [ai[k], ai[p]];
      arg += Math.PI;
    }
    const dr = ar[k][k],
      di = ai[k][k];
    logAbs += Math.log(Math.hypot(dr, di));
    arg += Math.atan2(di, dr);
    const den = dr * dr + di * di;
    for (let r = k + 1; r < n; r++) {
      const lr = (ar[r][k] * dr + ai[r][k] * di) / den;
      const li = (ai[r][k] * dr - ar[r][k] * di) / den;
      for (let c = k; c < n; c++) {
        ar[r][c] -= lr * ar[k][c] - li * ai[k][c];
        ai[r][c] -= lr * ai[k][c] + li * ar[k][c];
      }
    }
  }
  return { logAbs, arg };
}

/** Difference of two angles reduced to (−π, π]. */
function angleGap(a: number, b: number): number {
  const d = a - b;
  return Math.abs(d - 2 * Math.PI * Math.round(d / (2 * Math.PI)));
}

describe('complex CSC builders', () => {
  it('sums duplicates and sorts rows within each column', () => {
    const a = cscFromTriplets(3, [2, 0, 2, 1, 0], [0, 0, 0, 2, 0], [1, 2, 3, 4, 5], [0.5, 0, -1, 0, 1]);
    expect(Array.from(a.colPtr)).toEqual([0, 2, 2, 3]);
    expect(Array.from(a.rowIdx)).toEqual([0, 2, 1]);
    // (0,0): 2 + 5 = 7 + 1i; (2,0): 1 + 3 = 4 − 0.5i; (1,2): 4.
    const expected = [7, 1, 4, -0.5, 4, 0];
    for (let q = 0; q < expected.length; q++) expect(a.values[q]).toBeCloseTo(expected[q], 14);
  });

  it('multiplies like the dense matrix', () => {
    const { a } = latticeMatrix({ nx: 5, ny: 4, mouth: 2 });
    const d = toDense(a);
    const x = randomVector(2 * a.n, 3);
    const y = cscMultiply(a, x);
    for (let r = 0; r < a.n; r++) {
      let sr = 0,
        si = 0;
      for (let c = 0; c < a.n; c++) {
        sr += d.re[r][c] * x[2 * c] - d.im[r][c] * x[2 * c + 1];
        si += d.re[r][c] * x[2 * c + 1] + d.im[r][c] * x[2 * c];
      }
      expect(Math.abs(y[2 * r] - sr) + Math.abs(y[2 * r + 1] - si)).toBeLessThan(1e-13 * (1 + Math.hypot(sr, si)));
    }
  });

  it('rejects out-of-range triplets by name and position', () => {
    expect(() => cscFromTriplets(3, [0, 3], [0, 1], [1, 1], [0, 0])).toThrow(/triplet 1 has row 3/);
    expect(() => cscFromTriplets(3, [0], [0, 1], [1], [0])).toThrow(/same length/);
    expect(() => cscFromTriplets(2, [0], [0], [NaN], [0])).toThrow(/non-finite/);
  });
});

describe('sparse LU solves', () => {
  const cases: Array<[string, LatticeOptions, boolean]> = [
    ['lattice with two dense lead mouths, geometric ordering', { nx: 24, ny: 18, mouth: 6 }, true],
    ['lattice with two dense lead mouths, graph ordering', { nx: 24, ny: 18, mouth: 6 }, false],
    ['thin strip with wide mouths', { nx: 60, ny: 5, mouth: 5 }, true],
    ['zero diagonal (every pivot needs an exchange)', { nx: 15, ny: 13, mouth: 4, diagonal: 'zero', seed: 11 }, true],
    ['tiny diagonal (pivoting decides the accuracy)', { nx: 15, ny: 13, mouth: 4, diagonal: 'tiny', seed: 5 }, true],
  ];
  for (const [name, opts, geometric] of cases) {
    it(`A x = b and Aᵀ x = b to rounding: ${name}`, () => {
      const { a, sites } = latticeMatrix(opts);
      const plan = SparseLuPlan.analyse(a.n, a.colPtr, a.rowIdx, geometric ? { sites } : {});
      const lu = plan.factor(a.values);
      const b = randomVector(2 * a.n, 17);
      const x = lu.solve(b, 1, new Float64Array(2 * a.n));
      // Backward-stable LU gives residuals of a few hundred ε at these sizes (common practice, no source).
      expect(residual(a, x, b)).toBeLessThan(1e-12);
      const xt = lu.solveTranspose(b, 1, new Float64Array(2 * a.n));
      expect(residual(a, xt, b, true)).toBeLessThan(1e-12);
    });
  }

  it('delays pivots when the diagonal is zero, and the diagonal pivots survive otherwise', () => {
    const zero = latticeMatrix({ nx: 15, ny: 13, mouth: 4, diagonal: 'zero', seed: 11 });
    const planZ = SparseLuPlan.analyse(zero.a.n, zero.a.colPtr, zero.a.rowIdx, { sites: zero.sites });
    expect(planZ.factor(zero.a.values).delayedPivots).toBeGreaterThan(0);
    // Diagonally dominant values: every diagonal pivot passes the threshold test.
    const { a, sites } = latticeMatrix({ nx: 15, ny: 13, mouth: 0 });
    for (let c = 0; c < a.n; c++) {
      for (let e = a.colPtr[c]; e < a.colPtr[c + 1]; e++) if (a.rowIdx[e] === c) a.values[2 * e] += 10;
    }
    const plan = SparseLuPlan.analyse(a.n, a.colPtr, a.rowIdx, { sites });
    expect(plan.factor(a.values).delayedPivots).toBe(0);
  });

  it('in-place solve, out argument and many right-hand sides agree column by column', () => {
    const { a, sites } = latticeMatrix({ nx: 20, ny: 12, mouth: 4, seed: 3 });
    const plan = SparseLuPlan.analyse(a.n, a.colPtr, a.rowIdx, { sites });
    const lu = plan.factor(a.values);
    const n = a.n;
    const nrhs = 5;
    const B = randomVector(2 * n * nrhs, 23);
    for (const transpose of [false, true]) {
      const X = (transpose ? lu.solveTranspose : lu.solve).call(lu, B, nrhs, new Float64Array(B.length));
      for (let r = 0; r < nrhs; r++) {
        const col = B.slice(2 * n * r, 2 * n * (r + 1));
        const single = transpose ? lu.solveTranspose(col.slice()) : lu.solve(col.slice());
        const xr = X.subarray(2 * n * r, 2 * n * (r + 1));
        let diff = 0;
        for (let q = 0; q < 2 * n; q++) diff = Math.max(diff, Math.abs(single[q] - xr[q]));
        expect(diff).toBeLessThan(1e-13 * (1 + norm(single)));
        expect(residual(a, xr as Float64Array, col, transpose)).toBeLessThan(1e-12);
      }
    }
    // In place: the result replaces b.
    const b = randomVector(2 * n, 31);
    const copy = b.slice();
    const ret = lu.solve(b);
    expect(ret).toBe(b);
    expect(residual(a, b, copy)).toBeLessThan(1e-12);
  });

  it('keeps several factorisations of one plan alive at once', () => {
    const one = latticeMatrix({ nx: 16, ny: 10, mouth: 3, seed: 41 });
    const two = latticeMatrix({ nx: 16, ny: 10, mouth: 3, seed: 42, diagonal: 'zero' });
    const plan = SparseLuPlan.analyse(one.a.n, one.a.colPtr, one.a.rowIdx, { sites: one.sites });
    const lu1 = plan.factor(one.a.values);
    const lu2 = plan.factor(two.a.values);
    const b = randomVector(2 * one.a.n, 5);
    expect(residual(one.a, lu1.solve(b, 1, new Float64Array(b.length)), b)).toBeLessThan(1e-12);
    expect(residual(two.a, lu2.solve(b, 1, new Float64Array(b.length)), b)).toBeLessThan(1e-12);
  });
});

describe('sparse LU blocked solves and storage reuse', () => {
  /** Largest |a − b| over the first len doubles. */
  function maxDiff(a: Float64Array, b: Float64Array, len = a.length): number {
    let d = 0;
    for (let q = 0; q < len; q++) d = Math.max(d, Math.abs(a[q] - b[q]));
    return d;
  }

  // Wide mouths give fronts with many pivots (the four-column blocks and their remainders);
  // a zero diagonal adds delayed pivots, so pivot rows and columns differ.
  const matrices: Array<[string, LatticeOptions]> = [
    ['dense mouths', { nx: 30, ny: 22, mouth: 9, seed: 13 }],
    ['zero diagonal', { nx: 18, ny: 14, mouth: 5, diagonal: 'zero', seed: 19 }],
  ];
  for (const [name, opts] of matrices) {
    it(`pairs of right-hand sides give the one-at-a-time answers, even and odd counts: ${name}`, () => {
      const { a, sites } = latticeMatrix(opts);
      const plan = SparseLuPlan.analyse(a.n, a.colPtr, a.rowIdx, { sites });
      const lu = plan.factor(a.values);
      const n = a.n;
      for (const nrhs of [2, 3, 8]) {
        const B = randomVector(2 * n * nrhs, 100 + nrhs);
        // A sparse column too (one unit entry): the kernels skip blocks of zeros.
        B.fill(0, 0, 2 * n);
        B[2 * (n >> 1)] = 1;
        for (const transpose of [false, true]) {
          const X = transpose ? lu.solveTranspose(B, nrhs, new Float64Array(B.length)) : lu.solve(B, nrhs, new Float64Array(B.length));
          for (let r = 0; r < nrhs; r++) {
            const col = B.slice(2 * n * r, 2 * n * (r + 1));
            const single = transpose ? lu.solveTranspose(col.slice()) : lu.solve(col.slice());
            const xr = X.slice(2 * n * r, 2 * n * (r + 1));
            // Same operations in another grouping: agreement to rounding (common practice, no source).
            expect(maxDiff(single, xr)).toBeLessThan(1e-12 * (1 + norm(single)));
            expect(residual(a, xr, col, transpose)).toBeLessThan(1e-12);
          }
        }
      }
    });
  }

  it('with out, b is left alone; without, the answer replaces b (several right-hand sides)', () => {
    const { a, sites } = latticeMatrix({ nx: 14, ny: 11, mouth: 4, seed: 29 });
    const plan = SparseLuPlan.analyse(a.n, a.colPtr, a.rowIdx, { sites });
    const lu = plan.factor(a.values);
    const n = a.n;
    const nrhs = 3;
    const B = randomVector(2 * n * nrhs, 37);
    const keep = B.slice();
    const out = new Float64Array(B.length);
    for (const transpose of [false, true]) {
      const viaOut = transpose ? lu.solveTranspose(B, nrhs, out) : lu.solve(B, nrhs, out);
      expect(viaOut).toBe(out);
      expect(maxDiff(B, keep)).toBe(0);
      const inPlace = B.slice();
      const ret = transpose ? lu.solveTranspose(inPlace, nrhs) : lu.solve(inPlace, nrhs);
      expect(ret).toBe(inPlace);
      expect(maxDiff(inPlace, out)).toBe(0);
    }
    // b longer than 2·n·nrhs: only the first 2·n·nrhs doubles are read and, in place, written.
    const long = new Float64Array(2 * n + 6);
    long.set(keep.subarray(0, 2 * n));
    long.fill(7, 2 * n);
    lu.solve(long);
    expect(residual(a, long.slice(0, 2 * n), keep.slice(0, 2 * n))).toBeLessThan(1e-12);
    for (let q = 2 * n; q < long.length; q++) expect(long[q]).toBe(7);
  });

  it('factor(values, reuse) gives the same factors as a fresh factorisation and releases the old one', () => {
    const one = latticeMatrix({ nx: 20, ny: 15, mouth: 5, seed: 51 });
    // Same pattern, other values: a zero diagonal (delayed pivots, larger fronts, more storage).
    const two = latticeMatrix({ nx: 20, ny: 15, mouth: 5, seed: 52, diagonal: 'zero' });
    const plan = SparseLuPlan.analyse(one.a.n, one.a.colPtr, one.a.rowIdx, { sites: one.sites });
    const n = one.a.n;
    const b = randomVector(2 * n * 2, 9);
    const fresh = plan.factor(two.a.values);
    const xFresh = fresh.solve(b, 2, new Float64Array(b.length));
    const tFresh = fresh.solveTranspose(b, 2, new Float64Array(b.length));
    const detFresh = fresh.logDet();

    const first = plan.factor(one.a.values);
    const reused = plan.factor(two.a.values, first);
    // Identical arithmetic on the same values: bit-for-bit equal results.
    expect(maxDiff(reused.solve(b, 2, new Float64Array(b.length)), xFresh)).toBe(0);
    expect(maxDiff(reused.solveTranspose(b, 2, new Float64Array(b.length)), tFresh)).toBe(0);
    expect(reused.logDet().logAbs).toBe(detFresh.logAbs);
    expect(reused.logDet().arg).toBe(detFresh.arg);
    expect(reused.delayedPivots).toBe(fresh.delayedPivots);
    expect(residual(two.a, xFresh.slice(0, 2 * n), b.slice(0, 2 * n))).toBeLessThan(1e-12);

    // The released factorisation refuses to answer instead of giving stale numbers.
    expect(() => first.solve(b.slice())).toThrow(/reuse/);
    expect(() => first.logDet()).toThrow(/reuse/);
    expect(() => plan.factor(one.a.values, first)).toThrow(/reuse/);
    // Back the other way (storage grown by the delays serves the smaller case), chained.
    const again = plan.factor(one.a.values, plan.factor(one.a.values, reused));
    const y = again.solve(b.slice(0, 2 * n));
    expect(residual(one.a, y, b.slice(0, 2 * n))).toBeLessThan(1e-12);
    // A factorisation of another plan cannot lend its storage.
    const other = SparseLuPlan.analyse(one.a.n, one.a.colPtr, one.a.rowIdx, { sites: one.sites });
    expect(() => other.factor(one.a.values, again)).toThrow(/same plan/);
    expect(again.solve(b.slice(0, 2 * n))).toBeInstanceOf(Float64Array);
  });
});

describe('sparse LU log-determinant', () => {
  it('the reference dense determinant matches the Leibniz expansion of a 4×4 matrix', () => {
    // det A = Σ_σ sgn(σ) Π_i A[i, σ(i)] (definition of the determinant).
    const rnd = rng(99);
    const re = Array.from({ length: 4 }, () => Array.from({ length: 4 }, () => rnd()));
    const im = Array.from({ length: 4 }, () => Array.from({ length: 4 }, () => rnd()));
    let dr = 0,
      di = 0;
    const perms = (xs: number[]): number[][] =>
      xs.length <= 1 ? [xs] : xs.flatMap((x, k) => perms([...xs.slice(0, k), ...xs.slice(k + 1)]).map((p) => [x, ...p]));
    for (const p of perms([0, 1, 2, 3])) {
      let inv = 0;
      for (let a = 0; a < 4; a++) for (let b = a + 1; b < 4; b++) if (p[a] > p[b]) inv++;
      let pr = inv % 2 ? -1 : 1,
        pi = 0;
      for (let r = 0; r < 4; r++) {
        const xr = re[r][p[r]],
          xi = im[r][p[r]];
        [pr, pi] = [pr * xr - pi * xi, pr * xi + pi * xr];
      }
      dr += pr;
      di += pi;
    }
    const ref = denseLogDet({ re, im });
    expect(Math.abs(ref.logAbs - Math.log(Math.hypot(dr, di)))).toBeLessThan(1e-12);
    expect(angleGap(ref.arg, Math.atan2(di, dr))).toBeLessThan(1e-12);
  });

  const cases: Array<[string, LatticeOptions]> = [
    ['values with a nonzero diagonal', { nx: 9, ny: 7, mouth: 3, seed: 13 }],
    ['zero diagonal (row and column exchanges change the sign)', { nx: 9, ny: 7, mouth: 3, diagonal: 'zero', seed: 19 }],
    ['zero diagonal, second draw', { nx: 8, ny: 7, mouth: 3, diagonal: 'zero', seed: 20 }],
    ['zero diagonal, third draw', { nx: 7, ny: 6, mouth: 2, diagonal: 'zero', seed: 21 }],
  ];
  for (const [name, opts] of cases) {
    it(`agrees with dense references: ${name}`, () => {
      const { a, sites } = latticeMatrix(opts);
      const lu = SparseLuPlan.analyse(a.n, a.colPtr, a.rowIdx, { sites }).factor(a.values);
      const got = lu.logDet();
      const d = toDense(a);
      // |det A|² = det [[Re A, −Im A], [Im A, Re A]] (real embedding of a complex matrix),
      // evaluated with ml-matrix's LU; log|det| from its U diagonal.
      const n = a.n;
      const emb = Matrix.zeros(2 * n, 2 * n);
      for (let r = 0; r < n; r++) {
        for (let c = 0; c < n; c++) {
          emb.set(r, c, d.re[r][c]);
          emb.set(r, c + n, -d.im[r][c]);
          emb.set(r + n, c, d.im[r][c]);
          emb.set(r + n, c + n, d.re[r][c]);
        }
      }
      const u = new LuDecomposition(emb).upperTriangularMatrix;
      let logDetEmb = 0;
      for (let q = 0; q < 2 * n; q++) logDetEmb += Math.log(Math.abs(u.get(q, q)));
      expect(Math.abs(got.logAbs - logDetEmb / 2)).toBeLessThan(1e-10 * (1 + Math.abs(got.logAbs)));
      const ref = denseLogDet(d);
      expect(Math.abs(got.logAbs - ref.logAbs)).toBeLessThan(1e-10 * (1 + Math.abs(got.logAbs)));
      expect(angleGap(got.arg, ref.arg)).toBeLessThan(1e-9);
      expect(got.arg).toBeGreaterThan(-Math.PI);
      expect(got.arg).toBeLessThanOrEqual(Math.PI);
    });
  }

  it('counts the sign of row exchanges: permutation matrices times a phase', () => {
    // det of a transposition is −1, of a 3-cycle +1 (definition of the permutation sign);
    // scaling every entry by e^{iφ} multiplies det by e^{inφ}.
    const phi = 0.3;
    const swap = cscFromTriplets(
      4,
      [0, 1, 2, 3],
      [1, 0, 2, 3],
      [1, 1, 1, 1].map(() => Math.cos(phi)),
      [1, 1, 1, 1].map(() => Math.sin(phi)),
    );
    const d1 = SparseLuPlan.analyse(4, swap.colPtr, swap.rowIdx).factor(swap.values).logDet();
    expect(Math.abs(d1.logAbs)).toBeLessThan(1e-14);
    expect(angleGap(d1.arg, Math.PI + 4 * phi)).toBeLessThan(1e-13);
    const cycle = cscFromTriplets(3, [0, 1, 2], [1, 2, 0], [2, 2, 2], [0, 0, 0]);
    const d2 = SparseLuPlan.analyse(3, cycle.colPtr, cycle.rowIdx).factor(cycle.values).logDet();
    expect(Math.abs(d2.logAbs - 3 * Math.log(2))).toBeLessThan(1e-14);
    expect(angleGap(d2.arg, 0)).toBeLessThan(1e-13);
  });

  it('pivotRatio reports a near-singular matrix', () => {
    const { a, sites } = latticeMatrix({ nx: 8, ny: 8, seed: 2 });
    const plan = SparseLuPlan.analyse(a.n, a.colPtr, a.rowIdx, { sites });
    const healthy = plan.factor(a.values).pivotRatio();
    // Scale one column by 1e-12: the pivot of that unknown shrinks by about as much.
    const v = a.values.slice();
    for (let e = a.colPtr[10]; e < a.colPtr[11]; e++) {
      v[2 * e] *= 1e-12;
      v[2 * e + 1] *= 1e-12;
    }
    const sick = plan.factor(v).pivotRatio();
    expect(healthy).toBeGreaterThan(1e-3);
    expect(sick).toBeLessThan(1e-9);
  });
});

/** The matrix with every entry above the diagonal replaced by its mirror below (Aᵀ = A, no conjugation). */
function symmetrised(a: ComplexCsc): ComplexCsc {
  const values = a.values.slice();
  for (let c = 0; c < a.n; c++) {
    for (let e = a.colPtr[c]; e < a.colPtr[c + 1]; e++) {
      const r = a.rowIdx[e];
      if (r >= c) continue;
      // entry (r, c) above the diagonal takes the value of (c, r)
      for (let f = a.colPtr[r]; f < a.colPtr[r + 1]; f++) {
        if (a.rowIdx[f] !== c) continue;
        values[2 * e] = a.values[2 * f];
        values[2 * e + 1] = a.values[2 * f + 1];
      }
    }
  }
  return { ...a, values };
}

describe('sparse LU of complex symmetric matrices (z − H − Σ without a field)', () => {
  it('uses diagonal pivots, solves A x = b and Aᵀ x = b, and agrees with row pivoting', () => {
    const { a: a0, sites } = latticeMatrix({ nx: 30, ny: 22, mouth: 7, seed: 21 });
    const a = symmetrised(a0);
    const plan = SparseLuPlan.analyse(a.n, a.colPtr, a.rowIdx, { sites });
    const rowPivoting = SparseLuPlan.analyse(a.n, a.colPtr, a.rowIdx, { sites, symmetric: 'never' });
    const lu = plan.factor(a.values);
    const ref = rowPivoting.factor(a.values);
    expect(lu.symmetric).toBe(true);
    expect(ref.symmetric).toBe(false);
    const b = randomVector(2 * a.n, 29);
    // Backward-stable LU gives residuals of a few hundred ε at these sizes (common practice, no source).
    expect(residual(a, lu.solve(b, 1, new Float64Array(2 * a.n)), b)).toBeLessThan(1e-12);
    expect(residual(a, lu.solveTranspose(b, 1, new Float64Array(2 * a.n)), b, true)).toBeLessThan(1e-12);
    const d = lu.logDet();
    const dRef = ref.logDet();
    expect(Math.abs(d.logAbs - dRef.logAbs)).toBeLessThan(1e-12 * Math.abs(dRef.logAbs));
    // (the phase is a sum of one angle per pivot: rounding of order n·ε)
    expect(Math.abs(d.arg - dRef.arg)).toBeLessThan(1e-10);
    expect(lu.pivotRatio()).toBeGreaterThan(0);
  });

  it('row pivoting whenever the values are not exactly symmetric', () => {
    const { a, sites } = latticeMatrix({ nx: 12, ny: 10, mouth: 3, seed: 4 });
    const plan = SparseLuPlan.analyse(a.n, a.colPtr, a.rowIdx, { sites });
    expect(plan.factor(a.values).symmetric).toBe(false);
    const sym = symmetrised(a);
    expect(plan.factor(sym.values).symmetric).toBe(true);
    // One entry off by one unit in the last place is enough to be unsymmetric.
    const off = sym.values.slice();
    let e = sym.colPtr[5];
    while (sym.rowIdx[e] === 5) e++;
    off[2 * e] *= 1 + Number.EPSILON;
    expect(off[2 * e]).not.toBe(sym.values[2 * e]);
    expect(plan.factor(off).symmetric).toBe(false);
  });

  it('falls back to row pivoting when a root has no acceptable diagonal pivot left', () => {
    // A path graph with a zero diagonal: bipartite, so no elimination ever fills a diagonal
    // entry, but nonsingular (det = ±1 for an even number of sites).
    const n = 40;
    const rows: number[] = [];
    const cols: number[] = [];
    for (let v = 0; v + 1 < n; v++) {
      rows.push(v, v + 1);
      cols.push(v + 1, v);
    }
    for (let v = 0; v < n; v++) {
      rows.push(v);
      cols.push(v);
    }
    const re = rows.map((r, q) => (r === cols[q] ? 0 : 1 + 0.01 * Math.min(r, cols[q])));
    const a = cscFromTriplets(n, rows, cols, re, new Array<number>(rows.length).fill(0));
    const plan = SparseLuPlan.analyse(n, a.colPtr, a.rowIdx);
    const lu = plan.factor(a.values);
    expect(lu.symmetric).toBe(false);
    expect(plan.symmetricFallbacks).toBe(1);
    const b = randomVector(2 * n, 3);
    expect(residual(a, lu.solve(b, 1, new Float64Array(2 * n)), b)).toBeLessThan(1e-12);
  });

  it('storage passes between symmetric and unsymmetric factorisations of one plan', () => {
    const { a, sites } = latticeMatrix({ nx: 16, ny: 14, mouth: 4, seed: 9 });
    const sym = symmetrised(a);
    const plan = SparseLuPlan.analyse(a.n, a.colPtr, a.rowIdx, { sites });
    const b = randomVector(2 * a.n, 5);
    let lu = plan.factor(sym.values);
    for (const m of [a, sym, a, sym]) {
      lu = plan.factor(m.values, lu);
      expect(lu.symmetric).toBe(m === sym);
      expect(residual(m, lu.solve(b, 1, new Float64Array(2 * a.n)), b)).toBeLessThan(1e-12);
    }
  });

  it('names a bad symmetric option', () => {
    const { a } = latticeMatrix({ nx: 4, ny: 4 });
    expect(() => SparseLuPlan.analyse(a.n, a.colPtr, a.rowIdx, { symmetric: 'always' as 'auto' })).toThrow(/symmetric must be 'auto' or 'never', got always/);
  });
});

describe('sparse LU errors', () => {
  it('raises SingularMatrixError for a zero column and for an exactly rank-deficient block', () => {
    const { a, sites } = latticeMatrix({ nx: 10, ny: 9, mouth: 3, seed: 8 });
    const plan = SparseLuPlan.analyse(a.n, a.colPtr, a.rowIdx, { sites });
    const v = a.values.slice();
    for (let e = a.colPtr[37]; e < a.colPtr[38]; e++) v[2 * e] = v[2 * e + 1] = 0;
    expect(() => plan.factor(v)).toThrow(SingularMatrixError);
    try {
      plan.factor(v);
    } catch (err) {
      expect((err as SingularMatrixError).column).toBe(37);
    }
    // [[1, 1], [1, 1]] coupled into an identity: elimination gives an exact 0 (integers).
    const b = cscFromTriplets(5, [0, 1, 1, 2, 2, 3, 4], [0, 1, 2, 1, 2, 3, 4], [1, 1, 1, 1, 1, 1, 1], [0, 0, 0, 0, 0, 0, 0]);
    expect(() => SparseLuPlan.analyse(5, b.colPtr, b.rowIdx).factor(b.values)).toThrow(SingularMatrixError);
  });

  it('names what is wrong with bad input', () => {
    const { a, sites } = latticeMatrix({ nx: 5, ny: 5 });
    const plan = SparseLuPlan.analyse(a.n, a.colPtr, a.rowIdx, { sites });
    expect(() => plan.factor(new Float64Array(3))).toThrow(/values has length 3, expected 2·nnz/);
    const bad = a.values.slice();
    bad[9] = NaN;
    expect(() => plan.factor(bad)).toThrow(/entry 4 of the values \(imaginary part\) is NaN/);
    const infinite = a.values.slice();
    infinite[2 * a.colPtr[a.n] - 2] = -Infinity;
    expect(() => plan.factor(infinite)).toThrow(new RegExp(`entry ${a.colPtr[a.n] - 1} of the values \\(real part\\) is -Infinity`));
    expect(() => SparseLuPlan.analyse(a.n, a.colPtr, a.rowIdx, { sites: { i: new Int32Array(3), j: new Int32Array(3) } })).toThrow(
      /sites\.i and sites\.j must have length n = 25/,
    );
    const unsorted = a.rowIdx.slice();
    [unsorted[0], unsorted[1]] = [unsorted[1], unsorted[0]];
    expect(() => SparseLuPlan.analyse(a.n, a.colPtr, unsorted)).toThrow(/rows of column 0 are not strictly ascending/);
    expect(() => SparseLuPlan.analyse(a.n, a.colPtr, a.rowIdx, { pivotThreshold: 0 })).toThrow(/pivotThreshold/);
    const lu = plan.factor(a.values);
    expect(() => lu.solve(new Float64Array(10))).toThrow(/b has length 10, expected 2·n·nrhs = 50/);
    expect(() => lu.solve(new Float64Array(50), 0)).toThrow(/nrhs must be a positive integer/);
  });
});
