import { spawnSync } from 'node:child_process';
import { describe, expect, it } from 'vitest';
import { cscFromTriplets, cscMultiply, type ComplexCsc } from '../../shared/engine/complex-csc';
import { factorFront } from '../../shared/engine/dense-complex';
import { WasmFrontKernel, wasmKernelAvailable } from '../../shared/engine/front-kernel-wasm';
import { SparseLuPlan } from '../../shared/engine/sparse-lu';

/** Park–Miller generator, so every run sees the same fronts. */
function rng(seed: number): () => number {
  let s = seed;
  return () => {
    s = (s * 16807) % 2147483647;
    return s / 2147483647 - 0.5;
  };
}

type Diagonal = 'plain' | 'zero' | 'tiny' | 'ties' | 'every third zero';

/** A random m×m front (column-major, interleaved); the fully-summed diagonal as asked. */
function randomFront(m: number, kFs: number, diagonal: Diagonal, seed: number): Float64Array {
  const rnd = rng(seed);
  const f = new Float64Array(2 * m * m);
  for (let q = 0; q < f.length; q++) f[q] = rnd();
  for (let t = 0; t < kFs; t++) {
    const o = 2 * (t * m + t);
    if (diagonal === 'zero') f[o] = f[o + 1] = 0;
    else if (diagonal === 'ties') {
      // Zero diagonal, and entries of equal modulus (1, −1, i, −i) in several rows of the
      // column: the pivot search must pick the same one of the tied rows in both kernels.
      f[o] = f[o + 1] = 0;
      for (let r = t + 1; r < m; r += 3) {
        const c = 2 * (t * m + r);
        f[c] = (r & 1) === 0 ? ((r & 2) === 0 ? 1 : -1) : 0;
        f[c + 1] = (r & 1) === 1 ? ((r & 2) === 0 ? 1 : -1) : 0;
      }
    } else if (diagonal === 'every third zero') {
      // Pivots and delays alternate inside one block of pivots: every third fully-summed
      // row and column is zero among the fully-summed ones, so no update fills its diagonal.
      if (t % 3 === 1) {
        for (let r = 0; r < kFs; r++) {
          f[2 * (t * m + r)] = f[2 * (t * m + r) + 1] = 0;
          f[2 * (r * m + t)] = f[2 * (r * m + t) + 1] = 0;
        }
      } else f[o] += 3;
    } else if (diagonal === 'tiny') {
      f[o] *= 1e-9;
      f[o + 1] *= 1e-9;
    } else f[o] += 3;
  }
  // A column without any acceptable pivot among the fully-summed rows (it must be delayed).
  if (kFs > 3 && diagonal !== 'plain') for (let r = 0; r < kFs; r++) f[2 * (2 * m + r)] = f[2 * (2 * m + r) + 1] = 0;
  return f;
}

interface FrontResult {
  f: Float64Array;
  done: number;
  rows: Int32Array;
  cols: Int32Array;
}

function factorTs(f0: Float64Array, m: number, kFs: number, u: number, symmetric = false): FrontResult {
  const f = f0.slice();
  const rows = Int32Array.from({ length: m }, (_, q) => q);
  const cols = Int32Array.from({ length: m }, (_, q) => q);
  const done = factorFront(f, m, kFs, u, rows, cols, new Float64Array(2 * m), 32, symmetric);
  return { f, done, rows, cols };
}

function factorWasm(kernel: WasmFrontKernel, f0: Float64Array, m: number, kFs: number, u: number, symmetric = false): FrontResult {
  const at = kernel.reserve(16 * m * m);
  const rowsAt = kernel.reserve(4 * m);
  const colsAt = kernel.reserve(4 * m);
  const saveAt = kernel.reserve(16 * m);
  const packAt = kernel.reserve(WasmFrontKernel.packBytes(m));
  kernel.f64(at, 2 * m * m).set(f0);
  const rows = kernel.i32(rowsAt, m);
  const cols = kernel.i32(colsAt, m);
  for (let q = 0; q < m; q++) rows[q] = cols[q] = q;
  const done = kernel.factorFront(at, m, kFs, u, rowsAt, colsAt, saveAt, packAt, 32, symmetric);
  return { f: kernel.f64(at, 2 * m * m).slice(), done, rows: kernel.i32(rowsAt, m).slice(), cols: kernel.i32(colsAt, m).slice() };
}

/** The front with its upper triangle replaced by its lower one (Fᵀ = F, no conjugation). */
function symmetrised(f: Float64Array, m: number): Float64Array {
  const g = f.slice();
  for (let c = 0; c < m; c++)
    for (let r = c + 1; r < m; r++) {
      g[2 * (r * m + c)] = g[2 * (c * m + r)];
      g[2 * (r * m + c) + 1] = g[2 * (c * m + r) + 1];
    }
  return g;
}

/** Largest |entry| of a block, the scale for rounding tolerances. */
function maxAbs(f: Float64Array): number {
  let mx = 0;
  for (let q = 0; q < f.length; q++) mx = Math.max(mx, Math.abs(f[q]));
  return mx;
}

/**
 * max |(P·F0·Q − L·U)| over the eliminated rows and columns of a front factorised
 * completely (done = m): rows/cols give P and Q, L unit lower and U upper from F.
 */
function luResidual(f0: Float64Array, r: FrontResult, m: number): number {
  let worst = 0;
  for (let i = 0; i < m; i++) {
    for (let j = 0; j < m; j++) {
      let sr = 0,
        si = 0;
      for (let t = 0; t <= Math.min(i, j); t++) {
        const lr = t === i ? 1 : r.f[2 * (t * m + i)];
        const li = t === i ? 0 : r.f[2 * (t * m + i) + 1];
        const ur = r.f[2 * (j * m + t)],
          ui = r.f[2 * (j * m + t) + 1];
        sr += lr * ur - li * ui;
        si += lr * ui + li * ur;
      }
      const o = 2 * (r.cols[j] * m + r.rows[i]);
      worst = Math.max(worst, Math.hypot(f0[o] - sr, f0[o + 1] - si));
    }
  }
  return worst;
}

describe.runIf(wasmKernelAvailable())('WebAssembly front kernel against the TypeScript kernel', () => {
  const cases: Array<[number, number, Diagonal, number]> = [
    [1, 1, 'plain', 0.1],
    [3, 2, 'plain', 0.1],
    [9, 5, 'zero', 0.1],
    [17, 17, 'plain', 1],
    [40, 12, 'tiny', 0.1],
    [75, 40, 'zero', 0.1],
    [130, 70, 'plain', 0.1],
    [201, 150, 'zero', 0.1],
    [90, 90, 'tiny', 0.5],
    [37, 30, 'ties', 0.1],
    [64, 64, 'ties', 1],
  ];
  for (const [m, kFs, diagonal, u] of cases) {
    it(`front ${m}×${m}, ${kFs} fully summed, ${diagonal} diagonal, u = ${u}: same pivots, same factors to rounding`, () => {
      const f0 = randomFront(m, kFs, diagonal, 31 + m);
      const ts = factorTs(f0, m, kFs, u);
      const wasm = factorWasm(new WasmFrontKernel(), f0, m, kFs, u);
      expect(wasm.done).toBe(ts.done);
      expect(Array.from(wasm.rows)).toEqual(Array.from(ts.rows));
      expect(Array.from(wasm.cols)).toEqual(Array.from(ts.cols));
      // Same operations in the same order: equal to rounding (a few ε of the largest entry).
      const scale = maxAbs(ts.f);
      let worst = 0;
      for (let q = 0; q < ts.f.length; q++) worst = Math.max(worst, Math.abs(wasm.f[q] - ts.f[q]));
      expect(worst).toBeLessThanOrEqual(1e-14 * scale);
      // Bit for bit, in fact (=== does not tell the sign of a zero, which may differ).
      let unequal = 0;
      for (let q = 0; q < ts.f.length; q++) if (wasm.f[q] !== ts.f[q]) unequal++;
      expect(unequal).toBe(0);
      if (diagonal !== 'plain' && diagonal !== 'ties') expect(ts.done).toBeLessThan(kFs);
      if (diagonal === 'ties') expect(Array.from(ts.rows)).not.toEqual(Array.from({ length: m }, (_, q) => q));
    });
  }

  it('a fully factorised front satisfies P·F·Q = L·U to rounding with both kernels', () => {
    const m = 48;
    const f0 = randomFront(m, m, 'plain', 5);
    const scale = maxAbs(f0);
    for (const r of [factorTs(f0, m, m, 0.1), factorWasm(new WasmFrontKernel(), f0, m, m, 0.1)]) {
      expect(r.done).toBe(m);
      // Backward error of LU with threshold pivoting: a few hundred ε·|F| at this size (common practice, no source).
      expect(luResidual(f0, r, m)).toBeLessThan(1e-13 * scale);
    }
  });

  // Complex symmetric fronts (z − H − Σ without a field): diagonal pivots, lower triangle only.
  const symmetricCases: Array<[number, number, Diagonal, number]> = [
    [1, 1, 'plain', 0.1],
    [6, 3, 'plain', 0.1],
    [23, 23, 'plain', 0.1],
    [40, 12, 'tiny', 0.1],
    [75, 40, 'zero', 0.1],
    [130, 70, 'plain', 0.1],
    [201, 150, 'zero', 0.1],
    [90, 90, 'tiny', 0.5],
    [50, 30, 'every third zero', 0.1],
    [160, 120, 'every third zero', 0.1],
  ];
  for (const [m, kFs, diagonal, u] of symmetricCases) {
    it(`symmetric front ${m}×${m}, ${kFs} fully summed, ${diagonal} diagonal: same pivots and factors bit for bit, symmetric swaps only`, () => {
      const f0 = symmetrised(randomFront(m, kFs, diagonal, 57 + m), m);
      const ts = factorTs(f0, m, kFs, u, true);
      const wasm = factorWasm(new WasmFrontKernel(), f0, m, kFs, u, true);
      expect(wasm.done).toBe(ts.done);
      expect(Array.from(wasm.rows)).toEqual(Array.from(ts.rows));
      expect(Array.from(ts.rows)).toEqual(Array.from(ts.cols));
      if (diagonal !== 'plain') expect(ts.done).toBeLessThan(kFs);
      if (diagonal === 'every third zero') expect(ts.done).toBeGreaterThan(kFs / 2);
      // L panel and U rows everywhere, and the lower triangle of the Schur complement (the
      // WebAssembly kernel leaves the upper one stale when no pivot was delayed).
      let unequal = 0;
      for (let c = 0; c < m; c++)
        for (let r = 0; r < m; r++) {
          if (c >= ts.done && r >= ts.done && r < c) continue;
          const o = 2 * (c * m + r);
          if (wasm.f[o] !== ts.f[o] || wasm.f[o + 1] !== ts.f[o + 1]) unequal++;
        }
      expect(unequal).toBe(0);
      // U = D·Lᵀ on the eliminated part: U[q, c] = L[c, q]·U[q, q] to rounding.
      let worst = 0;
      for (let q = 0; q < ts.done; q++)
        for (let c = q + 1; c < m; c++) {
          const lr = ts.f[2 * (q * m + c)],
            li = ts.f[2 * (q * m + c) + 1];
          const dr = ts.f[2 * (q * m + q)],
            di = ts.f[2 * (q * m + q) + 1];
          const o = 2 * (c * m + q);
          worst = Math.max(worst, Math.hypot(ts.f[o] - (lr * dr - li * di), ts.f[o + 1] - (lr * di + li * dr)));
        }
      expect(worst).toBe(0);
      // The Schur complement the TypeScript kernel hands on is symmetric.
      for (let c = ts.done; c < m; c++)
        for (let r = c + 1; r < m; r++) {
          expect(ts.f[2 * (r * m + c)]).toBe(ts.f[2 * (c * m + r)]);
          expect(ts.f[2 * (r * m + c) + 1]).toBe(ts.f[2 * (c * m + r) + 1]);
        }
      if (ts.done === m) {
        // Backward error of the factorisation (common practice, no source).
        expect(luResidual(f0, ts, m)).toBeLessThan(1e-13 * maxAbs(f0));
      }
    });
  }

  it('keeps working on views after its memory grows', () => {
    const kernel = new WasmFrontKernel();
    const m = 20;
    const f0 = randomFront(m, 10, 'plain', 8);
    const first = factorWasm(kernel, f0, m, 10, 0.1);
    kernel.reserve(8 << 20);
    const again = factorWasm(kernel, f0, m, 10, 0.1);
    let worst = 0;
    for (let q = 0; q < first.f.length; q++) worst = Math.max(worst, Math.abs(again.f[q] - first.f[q]));
    expect(worst).toBe(0);
  });
});

/** A lattice matrix with dense mouths; a zero diagonal forces delayed pivots and larger fronts. */
function lattice(
  nx: number,
  ny: number,
  zeroDiagonal: boolean | 'some',
  seed: number,
  symmetric = false,
): { a: ComplexCsc; sites: { i: Int32Array; j: Int32Array } } {
  const rnd = rng(seed);
  const n = nx * ny;
  const rows: number[] = [],
    cols: number[] = [],
    re: number[] = [],
    im: number[] = [];
  const add = (r: number, c: number, x: number, y: number): void => {
    rows.push(r);
    cols.push(c);
    re.push(x);
    im.push(y);
  };
  const si = new Int32Array(n),
    sj = new Int32Array(n);
  for (let j = 0; j < ny; j++) {
    for (let i = 0; i < nx; i++) {
      const v = j * nx + i;
      si[v] = i;
      sj[v] = j;
      // ('some': every seventh site, so a few pivots are delayed)
      const zero = zeroDiagonal === true || (zeroDiagonal === 'some' && v % 7 === 3);
      add(v, v, zero ? 0 : 2.7 + 0.5 * rnd(), zero ? 0 : 0.2 * rnd());
      // (symmetric: the same value both ways, as z − H − Σ without a field)
      const pair = (a: number, b: number): void => {
        const x = -1 + 0.3 * rnd(),
          y = 0.3 * rnd();
        add(a, b, x, y);
        if (symmetric) add(b, a, x, y);
        else add(b, a, -1 + 0.3 * rnd(), 0.3 * rnd());
      };
      if (i + 1 < nx) pair(v, v + 1);
      if (j + 1 < ny) pair(v, v + nx);
    }
  }
  const w = Math.max(1, Math.round(ny / 3));
  for (const i of [0, nx - 1])
    for (let p = 0; p < w; p++)
      for (let q = symmetric ? p : 0; q < w; q++) {
        const x = 0.3 * rnd(),
          y = -0.3 * Math.abs(rnd());
        add(p * nx + i, q * nx + i, x, y);
        if (symmetric && q > p) add(q * nx + i, p * nx + i, x, y);
      }
  return { a: cscFromTriplets(n, rows, cols, re, im), sites: { i: si, j: sj } };
}

describe.runIf(wasmKernelAvailable())('sparse LU with the WebAssembly kernel', () => {
  for (const [name, nx, ny, zero, symmetric] of [
    ['lattice with dense mouths', 40, 30, false, false],
    ['zero diagonal (delayed pivots grow the fronts past the prediction)', 23, 19, true, false],
    ['complex symmetric lattice (diagonal pivots, one triangle)', 40, 30, false, true],
    ['complex symmetric, every seventh diagonal entry zero (delays, tried again after later pivots)', 23, 19, 'some', true],
    ['complex symmetric, zero diagonal (too many delays: row pivoting instead)', 23, 19, true, true],
  ] as const) {
    it(`same factorisation as the TypeScript kernel, and A x = b to rounding: ${name}`, () => {
      const { a, sites } = lattice(nx, ny, zero, 3, symmetric);
      const planTs = SparseLuPlan.analyse(a.n, a.colPtr, a.rowIdx, { sites, denseKernel: 'typescript' });
      const planWasm = SparseLuPlan.analyse(a.n, a.colPtr, a.rowIdx, { sites, denseKernel: 'wasm' });
      expect(planTs.denseKernel).toBe('typescript');
      expect(planWasm.denseKernel).toBe('wasm');
      const luTs = planTs.factor(a.values);
      let luWasm = planWasm.factor(a.values);
      // Twice, the second reusing the first's storage and the grown workspace.
      luWasm = planWasm.factor(a.values, luWasm);
      expect(luWasm.delayedPivots).toBe(luTs.delayedPivots);
      if (zero) expect(luWasm.delayedPivots).toBeGreaterThan(0);
      // Past max(64, n/64) delayed pivots a symmetric matrix goes through row pivoting.
      const rowPivoting = symmetric && zero === true;
      expect(luTs.symmetric).toBe(symmetric && !rowPivoting);
      expect(luWasm.symmetric).toBe(symmetric && !rowPivoting);
      expect(planWasm.symmetricFallbacks).toBe(rowPivoting ? 2 : 0);
      const dTs = luTs.logDet();
      const dWasm = luWasm.logDet();
      expect(Math.abs(dWasm.logAbs - dTs.logAbs)).toBeLessThan(1e-12 * Math.max(1, Math.abs(dTs.logAbs)));
      expect(Math.abs(dWasm.arg - dTs.arg)).toBeLessThan(1e-10);
      const x = new Float64Array(2 * a.n);
      for (let q = 0; q < x.length; q++) x[q] = Math.sin(0.37 * q + 1);
      const b = cscMultiply(a, x);
      const yTs = luTs.solve(b, 1, new Float64Array(b.length));
      const yWasm = luWasm.solve(b, 1, new Float64Array(b.length));
      let err = 0,
        diff = 0,
        nrm = 0;
      for (let q = 0; q < x.length; q++) {
        err = Math.max(err, Math.abs(yWasm[q] - x[q]));
        diff = Math.max(diff, Math.abs(yWasm[q] - yTs[q]));
        nrm = Math.max(nrm, Math.abs(x[q]));
      }
      // Well-conditioned lattice matrices: forward error of a few thousand ε (common practice, no source).
      expect(err).toBeLessThan(1e-11 * nrm);
      expect(diff).toBeLessThan(1e-12 * nrm);
      // The kernels (dense, assembly, extend-add) do the same operations in the same order:
      // the same factors bit for bit, so the same solution and determinant.
      expect(diff).toBe(0);
      expect(dWasm).toEqual(dTs);
    });
  }

  it('factors kept in the kernel memory move out when the next factorisation needs it, and stay exact', () => {
    // The latest factorisation lives in the kernel's memory; a later factor() without
    // reuse gives the held one copies of its own, reuse hands the memory over. The second
    // matrix has a zero diagonal: its delayed pivots grow the storage past the prediction.
    const one = lattice(21, 17, false, 5);
    const two = lattice(21, 17, true, 6);
    const planTs = SparseLuPlan.analyse(one.a.n, one.a.colPtr, one.a.rowIdx, { sites: one.sites, denseKernel: 'typescript' });
    const planWasm = SparseLuPlan.analyse(one.a.n, one.a.colPtr, one.a.rowIdx, { sites: one.sites, denseKernel: 'wasm' });
    const b = cscMultiply(
      one.a,
      Float64Array.from({ length: 2 * one.a.n }, (_, q) => Math.cos(0.3 * q)),
    );
    const ts1 = planTs.factor(one.a.values).solve(b, 1, new Float64Array(b.length));
    const ts2 = planTs.factor(two.a.values).solve(b, 1, new Float64Array(b.length));
    const lu1 = planWasm.factor(one.a.values);
    const before = lu1.solve(b, 1, new Float64Array(b.length));
    const lu2 = planWasm.factor(two.a.values);
    const lu3 = planWasm.factor(one.a.values);
    const lu4 = planWasm.factor(two.a.values, lu3);
    expect(Array.from(before)).toEqual(Array.from(ts1));
    expect(Array.from(lu1.solve(b, 1, new Float64Array(b.length)))).toEqual(Array.from(ts1));
    expect(Array.from(lu2.solve(b, 1, new Float64Array(b.length)))).toEqual(Array.from(ts2));
    expect(Array.from(lu4.solve(b, 1, new Float64Array(b.length)))).toEqual(Array.from(ts2));
    expect(() => lu3.solve(b, 1, new Float64Array(b.length))).toThrow(/reuse/);
    expect(lu1.logDet()).toEqual(planTs.factor(one.a.values).logDet());
  });

  it('the committed kernel bytes were built from the current source (scripts/build-wasm.mjs --check)', () => {
    const r = spawnSync(process.execPath, ['scripts/build-wasm.mjs', '--check'], { encoding: 'utf8' });
    expect(r.stderr).toBe('');
    expect(r.status).toBe(0);
  });
});
