/**
 * Timings of the sparse complex LU (shared/engine/sparse-lu.ts) on the matrices the
 * product factorises: rectangles of sites with a left and a right lead whose mouth
 * (a third of the height) carries a dense complex block, values of z − H − Σ. Two kinds:
 * without a field (H real, Σ complex symmetric: the matrix is complex symmetric and the LU
 * takes diagonal pivots, sparse-lu.ts) and in a field (Peierls phases on the hoppings and
 * an unsymmetric mouth block: row pivoting). The comparison with SciPy also times the
 * pole-search bench cavity's own T(z) at a contour node (cavityMatrix).
 *
 * Run: npx tsx scripts/bench-lu.ts   (one thread; figures in ms unless named otherwise;
 * mflopPerS uses the predicted flops of the analysis, so delayed pivots are not counted)
 * Against the reference: npx tsx scripts/bench-lu.ts --reference [--sides=50,100,200]
 * (SciPy's SuperLU through scripts/lu-reference.py, when python3 with scipy is present).
 */
import { execFileSync, spawnSync } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { loadavg, tmpdir } from 'node:os';
import { join } from 'node:path';
import { cscFromTriplets, cscMultiply, type ComplexCsc } from '../shared/engine/complex-csc';
import { buildCavitySystem, EffectiveHamiltonian } from '../shared/engine/effective-hamiltonian';
import { SparseLuPlan } from '../shared/engine/sparse-lu';
import { benchCavity } from './bench-cavity';

/**
 * A rectangle nx × ny with two side leads; hopping t = 1, z = 1.3 − 0.02i (inside the band,
 * below the axis). Without `field` the mouth blocks are complex symmetric (Σ of a lead
 * without a field is: docs/physics-model.md), so the whole matrix is; with it the hoppings
 * along x carry Peierls phases e^{±2πi·0.02·j} (0.02 flux quanta per plaquette, Landau
 * gauge) and the mouth blocks are unsymmetric.
 */
export function benchMatrix(nx: number, ny: number, field = false): { a: ComplexCsc; sites: { i: Int32Array; j: Int32Array } } {
  let seed = 12345;
  const rnd = (): number => {
    seed = (seed * 16807) % 2147483647;
    return seed / 2147483647 - 0.5;
  };
  const t = 1;
  const zr = 1.3;
  const zi = -0.02;
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
      add(v, v, 4 * t - zr, -zi);
      if (i + 1 < nx) {
        // (E − H)_{v, v+x} = t·e^{iθ}, (E − H)_{v+x, v} = t·e^{−iθ}: Hermitian H, unsymmetric E − H
        const theta = field ? 2 * Math.PI * 0.02 * j : 0;
        add(v, id(i + 1, j), -t * Math.cos(theta), -t * Math.sin(theta));
        add(id(i + 1, j), v, -t * Math.cos(theta), t * Math.sin(theta));
      }
      if (j + 1 < ny) {
        add(v, id(i, j + 1), -t, 0);
        add(id(i, j + 1), v, -t, 0);
      }
    }
  }
  const w = Math.max(1, Math.round(ny / 3));
  const j0 = Math.floor((ny - w) / 2);
  for (const i of [0, nx - 1]) {
    for (let p = 0; p < w; p++) {
      for (let q = field ? 0 : p; q < w; q++) {
        const x = 0.3 * rnd();
        const y = -0.3 * Math.abs(rnd());
        add(id(i, j0 + p), id(i, j0 + q), x, y);
        if (!field && q > p) add(id(i, j0 + q), id(i, j0 + p), x, y);
      }
    }
  }
  return { a: cscFromTriplets(n, rows, cols, re, im), sites: { i: si, j: sj } };
}

function median(xs: number[]): number {
  const s = [...xs].sort((a, b) => a - b);
  return s[Math.floor(s.length / 2)];
}

/** Median wall time (ms) of reps calls; the median CPU time of this process goes to cpu[0]. */
function time(fn: () => void, reps: number, cpu?: number[]): number {
  const ts: number[] = [];
  const cs: number[] = [];
  for (let r = 0; r < reps; r++) {
    const c0 = process.cpuUsage();
    const t0 = performance.now();
    fn();
    ts.push(performance.now() - t0);
    const c = process.cpuUsage(c0);
    cs.push((c.user + c.system) / 1000);
  }
  if (cpu) cpu[0] = median(cs);
  return median(ts);
}

/** Runs the LU bench and returns its figures (times in ms), also printing them. */
export async function benchLu(): Promise<Record<string, number>> {
  const out: Record<string, number> = {};
  for (const side of [50, 100, 200]) {
    const { a, sites } = benchMatrix(side, side);
    const n = a.n;
    const t0 = performance.now();
    const plan = SparseLuPlan.analyse(n, a.colPtr, a.rowIdx, { sites });
    const analyseMs = performance.now() - t0;
    // Warm the JIT on this size, then take the median of several factorisations.
    plan.factor(a.values);
    const reps = side <= 50 ? 30 : side <= 100 ? 10 : 5;
    let factors = plan.factor(a.values);
    // CPU time is printed too: on a shared machine the wall time includes waiting for a core.
    const cpu = [0];
    const factorMs = time(
      () => {
        factors = plan.factor(a.values);
      },
      reps,
      cpu,
    );
    // The same with the previous factorisation's storage taken over (how sweeps call it).
    const cpuReuse = [0];
    const factorReuseMs = time(
      () => {
        factors = plan.factor(a.values, factors);
      },
      reps,
      cpuReuse,
    );
    const x = new Float64Array(2 * n);
    for (let q = 0; q < x.length; q++) x[q] = Math.sin(0.37 * q);
    const b = cscMultiply(a, x);
    const y = factors.solve(b.slice());
    let err = 0;
    let nrm = 0;
    for (let q = 0; q < x.length; q++) {
      err += (y[q] - x[q]) ** 2;
      nrm += x[q] ** 2;
    }
    const key = `${side}x${side}`;
    out[`lu.${key}.sites`] = n;
    out[`lu.${key}.analyseMs`] = analyseMs;
    out[`lu.${key}.factorMs`] = factorMs;
    out[`lu.${key}.factorCpuMs`] = cpu[0];
    out[`lu.${key}.factorReuseMs`] = factorReuseMs;
    out[`lu.${key}.factorReuseCpuMs`] = cpuReuse[0];
    out[`lu.${key}.delayedPivots`] = factors.delayedPivots;
    out[`lu.${key}.factorNonzeros`] = plan.factorNonzeros;
    out[`lu.${key}.factorMflop`] = plan.factorFlops / 1e6;
    out[`lu.${key}.mflopPerS`] = plan.factorFlops / 1e3 / factorMs;
    out[`lu.${key}.fronts`] = plan.frontCount;
    out[`lu.${key}.largestFront`] = plan.largestFront;
    out[`lu.${key}.relError`] = Math.sqrt(err / nrm);
    out[`lu.${key}.symmetric`] = factors.symmetric ? 1 : 0;
    // The same rectangle in a field: unsymmetric, row pivoting.
    const inField = benchMatrix(side, side, true).a;
    let fieldFactors = plan.factor(inField.values);
    out[`lu.${key}.inField.factorMs`] = time(() => {
      fieldFactors = plan.factor(inField.values, fieldFactors);
    }, reps);
    if (side === 100) {
      // Right-hand sides as the callers have them: 1 (Newton), 6 (contour probes), 32 (many channels).
      for (const [nrhs, solveReps] of [
        [1, 21],
        [6, 11],
        [32, 5],
      ]) {
        const bk = new Float64Array(2 * n * nrhs);
        for (let q = 0; q < bk.length; q++) bk[q] = Math.cos(0.11 * q);
        const ok = new Float64Array(bk.length);
        factors.solve(bk, nrhs, ok);
        out[`lu.${key}.solve${nrhs}Ms`] = time(() => factors.solve(bk, nrhs, ok), solveReps);
        out[`lu.${key}.solveTranspose${nrhs}Ms`] = time(() => factors.solveTranspose(bk, nrhs, ok), solveReps);
      }
      out[`lu.${key}.solve6PerRhsOverSolve1`] = out[`lu.${key}.solve6Ms`] / 6 / out[`lu.${key}.solve1Ms`];
      out[`lu.${key}.solve32PerRhsOverSolve1`] = out[`lu.${key}.solve32Ms`] / 32 / out[`lu.${key}.solve1Ms`];
    }
  }
  // The machine is shared: the 1-minute load average says how far to trust the wall times.
  out['machine.loadAverage1m'] = loadavg()[0];
  for (const [k, v] of Object.entries(out)) {
    const shown = Math.abs(v) >= 100 || Number.isInteger(v) ? v.toFixed(0) : Math.abs(v) < 1e-3 ? v.toExponential(2) : v.toFixed(2);
    console.log(`${k.padEnd(34)} ${shown}`);
  }
  return out;
}

/** The bench matrix in the binary layout scripts/lu-reference.py reads. */
export function writeMatrix(path: string, a: ComplexCsc): void {
  const nnz = a.colPtr[a.n];
  const buf = Buffer.alloc(8 + 4 * (a.n + 1) + 4 * nnz + 16 * nnz);
  buf.writeInt32LE(a.n, 0);
  buf.writeInt32LE(nnz, 4);
  Buffer.from(a.colPtr.buffer, a.colPtr.byteOffset, 4 * (a.n + 1)).copy(buf, 8);
  Buffer.from(a.rowIdx.buffer, a.rowIdx.byteOffset, 4 * nnz).copy(buf, 8 + 4 * (a.n + 1));
  Buffer.from(a.values.buffer, a.values.byteOffset, 16 * nnz).copy(buf, 8 + 4 * (a.n + 1) + 4 * nnz);
  writeFileSync(path, buf);
}

/** True when python3 with scipy can run the reference script. */
export function referenceAvailable(): boolean {
  const r = spawnSync('python3', ['-c', 'import scipy.sparse.linalg'], { stdio: 'ignore' });
  return r.status === 0;
}

/**
 * One LU at 2,500 / 10,000 / 40,000 sites next to SciPy's SuperLU (minimum-degree
 * ordering of Aᵀ + A, scripts/lu-reference.py) on the same matrices, measured back to
 * back: each round times the product, then the reference, size by size; the minimum
 * over rounds of each is kept, so a burst of load from elsewhere hits both sides
 * alike. The product's time is a factorisation with a reused plan and storage (as
 * the sweeps and pole searches call it); the reference's includes its ordering, which
 * SciPy cannot reuse across calls.
 */
export async function benchLuReference(rounds = 3, sides = [50, 100, 200]): Promise<Record<string, number | string>> {
  const out: Record<string, number | string> = {};
  const kinds: BenchKind[] = [
    { label: '(symmetric, diagonal pivots)', symmetric: true, matrix: (side) => benchMatrix(side, side) },
    { label: 'in a field (row pivoting)', symmetric: false, matrix: (side) => benchMatrix(side, side, true) },
    { label: 'bench cavity, T(z) at a contour node (symmetric)', symmetric: true, matrix: cavityMatrix },
  ];
  for (const kind of kinds) Object.assign(out, await luAgainstReference(rounds, sides, kind));
  return out;
}

interface BenchKind {
  label: string;
  /** Whether the product must take its symmetric path on these matrices (checked). */
  symmetric: boolean;
  matrix: (side: number) => { a: ComplexCsc; sites: { i: Int32Array; j: Int32Array } };
}

/**
 * The pole-search bench cavity (bench-cavity.ts: GaAs, weak disorder, two 10-site leads) as
 * the search factorises it: T(z) = z − H − Σ(z) at z = 9.4 − 0.02i meV, inside the 10,000-site
 * search's window [9.10, 9.71] meV.
 */
function cavityMatrix(side: number): { a: ComplexCsc; sites: { i: Int32Array; j: Int32Array } } {
  const op = new EffectiveHamiltonian(buildCavitySystem(benchCavity(side)));
  const z = { re: 9.4, im: -0.02 };
  const values = new Float64Array(2 * op.rowIdx.length);
  op.assemble(z, op.sheetAt(z.re), values);
  return { a: { n: op.n, colPtr: op.colPtr, rowIdx: op.rowIdx, values }, sites: op.sites };
}

async function luAgainstReference(rounds: number, sides: number[], kind: BenchKind): Promise<Record<string, number | string>> {
  const out: Record<string, number | string> = {};
  if (!referenceAvailable()) {
    out['reference'] = 'skipped: python3 with scipy not found (apt-get install python3-scipy, or pip install scipy)';
  }
  const dir = mkdtempSync(join(tmpdir(), 'poleward-lu-'));
  try {
    for (const side of sides) {
      const { a, sites } = kind.matrix(side);
      const file = join(dir, `matrix-${side}.bin`);
      writeMatrix(file, a);
      const plan = SparseLuPlan.analyse(a.n, a.colPtr, a.rowIdx, { sites });
      let factors = plan.factor(a.values);
      factors = plan.factor(a.values, factors);
      // Many repetitions: on a loaded machine the minimum needs many tries to be steady.
      const reps = side <= 50 ? 100 : side <= 100 ? 30 : 8;
      let product = Infinity;
      let productCpu = Infinity;
      let reference = Infinity;
      let referenceCpu = Infinity;
      const loads: number[] = [];
      for (let r = 0; r < rounds; r++) {
        for (let q = 0; q < reps; q++) {
          const c0 = process.cpuUsage();
          const t0 = performance.now();
          factors = plan.factor(a.values, factors);
          product = Math.min(product, performance.now() - t0);
          const c = process.cpuUsage(c0);
          productCpu = Math.min(productCpu, (c.user + c.system) / 1000);
        }
        loads.push(loadavg()[0]);
        if (out['reference'] === undefined) {
          const line = execFileSync('python3', [join(import.meta.dirname, 'lu-reference.py'), String(reps), file], { encoding: 'utf8' });
          const ref = JSON.parse(line.trim().split('\n').pop()!) as { minMs: number; minCpuMs: number };
          reference = Math.min(reference, ref.minMs);
          referenceCpu = Math.min(referenceCpu, ref.minCpuMs);
        }
      }
      const key = `${a.n} sites ${kind.label}`;
      if (factors.symmetric !== kind.symmetric) throw new Error(`bench-lu: the ${key} matrix was factorised with the wrong pivoting`);
      out[`${key}: product ms (min wall / min CPU)`] = `${product.toFixed(2)} / ${productCpu.toFixed(2)}`;
      if (out['reference'] === undefined) {
        out[`${key}: reference ms (min wall / min CPU)`] = `${reference.toFixed(2)} / ${referenceCpu.toFixed(2)}`;
        out[`${key}: ratio product/reference (wall / CPU)`] = `${(product / reference).toFixed(2)} / ${(productCpu / referenceCpu).toFixed(2)}`;
      }
      out[`${key}: load average 1m`] = loads.map((x) => x.toFixed(1)).join(' / ');
    }
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
  return out;
}

if (import.meta.url === `file://${process.argv[1]}` || process.argv[1]?.endsWith('bench-lu.ts')) {
  if (process.argv.includes('--reference')) {
    const sides = process.argv
      .find((x) => x.startsWith('--sides='))
      ?.slice(8)
      .split(',')
      .map(Number);
    for (const [k, v] of Object.entries(await benchLuReference(3, sides))) console.log(`${k.padEnd(70)} ${typeof v === 'number' ? v.toFixed(2) : v}`);
  } else {
    await benchLu();
  }
}
