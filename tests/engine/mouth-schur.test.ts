import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { copyLowerSymmetric, factorFrontSymmetric } from '../../shared/engine/dense-real';
import { denseLu, denseLuSolve } from '../../shared/engine/dense-solve';
import { buildCavitySystem, EffectiveHamiltonian } from '../../shared/engine/effective-hamiltonian';
import { WasmRealFrontKernel } from '../../shared/engine/front-kernel-real-wasm';
import { hermitianEigen } from '../../shared/engine/hermitian-eigen';
import { largestDifference } from '../../shared/engine/mouth-interpolation';
import { MouthSchur } from '../../shared/engine/mouth-schur';
import { findPoles } from '../../shared/engine/poles';
import { mouthOrder, pointFromMouth, type TransmissionPoint } from '../../shared/engine/scattering-point';
import { TransmissionSolver, transmissionSweep } from '../../shared/engine/transmission';
import type { CavityModelInput } from '../../shared/model/cavity-model';
import { highQWire } from './high-q-wire';
import { irregularCavity } from './irregular-cavity';

/** The irregular cavity with three leads, one offset. */
const irregular = (field: number) =>
  irregularCavity(field, [
    { side: 'left', start: 2, width: 5 },
    { side: 'right', start: 4, width: 4 },
    { side: 'top', start: 3, width: 6, offset: 1.5 },
  ]);

const wire = highQWire;

const operator = (doc: CavityModelInput) => new EffectiveHamiltonian(buildCavitySystem(doc));

/** Largest difference of T, R and S (when both carry it), and of arg det T (wrapped). */
function difference(a: TransmissionPoint, b: TransmissionPoint): { t: number; s: number; phase: number } {
  let s = 0;
  if (a.sMatrix && b.sMatrix) for (let q = 0; q < a.sMatrix.length; q++) s = Math.max(s, Math.abs(a.sMatrix[q] - b.sMatrix[q]));
  const d = a.detPhase - b.detPhase;
  return { t: largestDifference(a, b), s, phase: Math.abs(Math.atan2(Math.sin(d), Math.cos(d))) };
}

/** A random symmetric m×m front whose fully-summed rows/columns `tiny` are scaled by 1e-9 there (so they are delayed). */
function symmetricFront(m: number, kFs: number, tiny: number[], seed: number): Float64Array {
  const random = () => ((seed = (seed * 1103515245 + 12345) % 2147483648) / 2147483648) * 2 - 1;
  const f = new Float64Array(m * m);
  for (let c = 0; c < m; c++)
    for (let r = c; r < m; r++) {
      let x = random() + (r === c ? 4 * Math.sign(random()) : 0);
      if ((tiny.includes(r) && c < kFs) || (tiny.includes(c) && r < kFs)) x *= 1e-9;
      f[c * m + r] = x;
      f[r * m + c] = x;
    }
  return f;
}

describe('the real symmetric front kernel', () => {
  const cases: [number, number, number[]][] = [
    [9, 5, [1]],
    [40, 37, [3, 30]],
    [70, 33, [0, 31]],
  ];

  it('leaves the Schur complement of the pivots it takes, with diagonal pivots and delays', () => {
    for (const [m, kFs, tiny] of cases) {
      const a = symmetricFront(m, kFs, tiny, 11 + m);
      const f = a.slice();
      const rows = Int32Array.from({ length: m }, (_, q) => q);
      const cols = rows.slice();
      const done = factorFrontSymmetric(f, m, kFs, 0.1, rows, cols, new Float64Array(m), 8);
      expect(done).toBe(kFs - tiny.length);
      expect([...rows]).toEqual([...cols]);
      expect(rows.slice(done, kFs).sort()).toEqual(Int32Array.from(tiny).sort());
      // S = A_RR − A_RP A_PP⁻¹ A_PR by a dense complex LU of A_PP (dense-solve.ts), P the pivots taken, R the rest
      const P = [...rows.slice(0, done)];
      const R = [...rows.slice(done)];
      const app = new Float64Array(2 * done * done);
      P.forEach((i, x) => P.forEach((j, y) => (app[2 * (x * done + y)] = a[j * m + i])));
      const apr = new Float64Array(2 * done * R.length);
      P.forEach((i, x) => R.forEach((j, y) => (apr[2 * (x * R.length + y)] = a[j * m + i])));
      const x = denseLuSolve(denseLu(done, app), apr, R.length);
      const packed = new Float64Array(R.length * R.length);
      copyLowerSymmetric(f, done * m + done, m, R.length, packed, 0);
      let worst = 0;
      let scale = 0;
      R.forEach((i, u) =>
        R.forEach((j, v) => {
          let s = a[j * m + i];
          P.forEach((p, w) => (s -= a[p * m + i] * x[2 * (w * R.length + v)]));
          scale = Math.max(scale, Math.abs(s));
          // the kernel leaves the lower triangle; copyLowerSymmetric packs both
          if (u >= v) worst = Math.max(worst, Math.abs(f[(done + v) * m + done + u] - s));
          worst = Math.max(worst, Math.abs(packed[v * R.length + u] - s));
        }),
      );
      expect(worst).toBeLessThan(1e-12 * scale);
    }
  });

  it('gives the same fronts, bit for bit, in WebAssembly', () => {
    const wasm = WasmRealFrontKernel.create();
    expect(wasm).not.toBeNull();
    for (const [m, kFs, tiny] of cases) {
      const a = symmetricFront(m, kFs, tiny, 5 + m);
      const rows = Int32Array.from({ length: m }, (_, q) => q);
      const f = a.slice();
      const rowsTs = rows.slice();
      const done = factorFrontSymmetric(f, m, kFs, 0.1, rowsTs, rowsTs.slice(), new Float64Array(m), 8);
      const at = { f: wasm!.reserve(8 * m * m), rows: wasm!.reserve(4 * m), cols: wasm!.reserve(4 * m), save: wasm!.reserve(8 * m) };
      wasm!.f64(at.f, m * m).set(a);
      wasm!.i32(at.rows, m).set(rows);
      wasm!.i32(at.cols, m).set(rows);
      expect(wasm!.factorFront(at.f, m, kFs, 0.1, at.rows, at.cols, at.save, 8)).toBe(done);
      expect([...wasm!.i32(at.rows, m)]).toEqual([...rowsTs]);
      const g = wasm!.f64(at.f, m * m);
      let worst = 0;
      for (let q = 0; q < m * m; q++) worst = Math.max(worst, Math.abs(g[q] - f[q]));
      expect(worst).toBe(0);
    }
  });
});

describe('transmission by the mouth Schur complement (issue 9, item 4)', () => {
  it('agrees with the direct solve at many energies with three leads, and S†S = 1', () => {
    const op = operator(irregular(0));
    const t = op.hopping;
    const solver = new TransmissionSolver(op);
    expect(solver.schurApplies).toBe(true);
    let worst = { t: 0, s: 0, phase: 0 };
    let unitarity = 0;
    for (let k = 0; k < 60; k++) {
      const E = t * (0.02 + (1.9 * k) / 60);
      const a = solver.atBySchur(E, true);
      const b = solver.at(E, true);
      const d = difference(a, b);
      worst = { t: Math.max(worst.t, d.t), s: Math.max(worst.s, d.s), phase: Math.max(worst.phase, d.phase) };
      unitarity = Math.max(unitarity, a.unitarityResidual, a.currentResidual);
      expect(a.channels).toEqual(b.channels);
    }
    expect(worst.t).toBeLessThan(1e-10);
    expect(worst.s).toBeLessThan(1e-10);
    expect(worst.phase).toBeLessThan(1e-8);
    expect(unitarity).toBeLessThan(1e-10);
    // the TypeScript kernels (the reference) give the same G on the mouths
    const wasm = MouthSchur.forOperator(op)!;
    const typescript = MouthSchur.forOperator(op, { denseKernel: 'typescript' })!;
    for (const E of [0.3 * t, 0.9 * t, 1.7 * t]) {
      const a = wasm.at(E)!;
      const b = typescript.at(E)!;
      expect(a.delayed).toBe(b.delayed);
      let d = 0;
      a.mouth.forEach((x, q) => (d = Math.max(d, Math.abs(x - b.mouth[q]))));
      expect(d).toBe(0);
    }
  });

  it('is exact at an eigenvalue of the cavity with its mouths clamped (the pivot is delayed into the root)', () => {
    const op = operator(irregular(0));
    // H on the interior (every site but the mouths), dense: −(values at z = 0) there, Σ touches only the mouths
    const values = new Float64Array(2 * op.rowIdx.length);
    op.assemble({ re: 0, im: 0 }, op.sheetAt(0), values);
    const mouth = new Set(mouthOrder(op));
    const interior = Array.from({ length: op.n }, (_, v) => v).filter((v) => !mouth.has(v));
    const at = new Map(interior.map((v, a) => [v, a]));
    const ni = interior.length;
    const h = new Float64Array(2 * ni * ni);
    for (let c = 0; c < op.n; c++)
      for (let e = op.colPtr[c]; e < op.colPtr[c + 1]; e++) {
        const r = op.rowIdx[e];
        if (at.has(r) && at.has(c)) h[2 * (at.get(r)! * ni + at.get(c)!)] = -values[2 * e];
      }
    const eigen = hermitianEigen(ni, h);
    // an interior eigenvalue where every lead has an open channel
    const E = [...eigen.values].find((x) => [0, 1, 2].every((l) => op.openChannels(l, x).length > 0) && x > 0.5 * op.hopping)!;
    expect(E).toBeDefined();
    const schur = MouthSchur.forOperator(op)!;
    const green = schur.at(E)!;
    expect(green.delayed).toBeGreaterThanOrEqual(1);
    const solver = new TransmissionSolver(op);
    const a = pointFromMouth(op, E, green.mouth, green.detPhase, true);
    const b = solver.at(E, true);
    const d = difference(a, b);
    expect(d.t).toBeLessThan(1e-10);
    expect(d.s).toBeLessThan(1e-10);
    expect(a.unitarityResidual).toBeLessThan(1e-10);
  });

  it('agrees next to a Q = 10^5 resonance and across a channel threshold', () => {
    const op = operator(wire);
    const solver = new TransmissionSolver(op);
    expect(solver.schurApplies).toBe(true);
    const narrow = findPoles(op, { emin: 14.8, emax: 15.4, gammaMax: 0.01 }).poles.find((p) => (p.quality ?? 0) > 5e4)!;
    expect(narrow.quality!).toBeGreaterThan(8e4);
    const threshold = op.thresholds.find((e) => e > 12.8 && e < 15.4)!;
    const energies = [
      ...[-3, -1, -0.5, -0.1, 0, 0.1, 0.5, 1, 3].map((x) => narrow.energy + x * narrow.width),
      ...[-1e-3, -1e-7, -1e-10, 1e-10, 1e-7, 1e-3].map((x) => threshold + x * op.hopping),
    ];
    let peak = 0;
    for (const E of energies) {
      const a = solver.atBySchur(E, true);
      const b = solver.at(E, true);
      const d = difference(a, b);
      expect(d.t).toBeLessThan(1e-10);
      expect(d.s).toBeLessThan(1e-10);
      expect(a.unitarityResidual).toBeLessThan(1e-10);
      expect(a.channels).toEqual(b.channels);
      peak = Math.max(peak, a.transmission[0][1]);
    }
    // the peak was sampled: the Breit-Wigner top of a symmetric double barrier reaches about one channel
    expect(peak).toBeGreaterThan(0.5);
  });

  it('agrees with the direct solve on a graphene dot with numerical leads (t′, Δ, a lead offset)', () => {
    // honeycomb-leads.test.ts's dot: C–C distance 0.142 nm, t = 2.7 eV, zigzag and armchair leads
    const acc = 0.142;
    const op = operator({
      name: 'graphene dot',
      spacing: acc,
      lattice: { kind: 'honeycomb', hopping: 2.7, nextHopping: 0.1, sublatticePotential: 0.05, removeDangling: true },
      grid: { nx: 14, ny: 8 },
      shape: {
        kind: 'subtract',
        from: { kind: 'rectangle', x0: -0.01, y0: -0.01, width: 14 * (Math.sqrt(3) / 2) * acc, height: 8 * 1.5 * acc },
        remove: [{ kind: 'disk', cx: 9 * (Math.sqrt(3) / 2) * acc, cy: 3 * acc, radius: 0.2 }],
      },
      leads: [
        { side: 'left', start: 2, width: 4 },
        { side: 'top', start: 5, width: 6, offset: -40 },
      ],
    });
    const solver = new TransmissionSolver(op);
    expect(solver.schurApplies).toBe(true);
    let open = 0;
    for (const f of [0.21, 0.47, 0.83, -0.55]) {
      const E = f * op.hopping;
      const d = difference(solver.atBySchur(E, true), solver.at(E, true));
      expect(d.t).toBeLessThan(1e-10);
      expect(d.s).toBeLessThan(1e-10);
      open += solver.at(E).channels.reduce((x, y) => x * y, 1);
    }
    expect(open).toBeGreaterThan(0);
  });

  it('leaves energies near graphene’s Dirac point to the direct solve, where every diagonal pivot fails the threshold', () => {
    // Graphene dot G2 of the demo catalogue (a disk with narrow necks, zigzag leads). The honeycomb is
    // bipartite: A(E) = E − H has the diagonal E against hoppings t, so below |E| = 0.1·t (the pivot
    // threshold) every interior pivot is delayed and the partial factorisation gives up (at() is null).
    const g2 = JSON.parse(readFileSync(new URL('../../catalogue/hl-graphene-g2.json', import.meta.url), 'utf8')) as { model: CavityModelInput };
    const op = operator(g2.model);
    const schur = MouthSchur.forOperator(op)!;
    expect(schur).not.toBeNull();
    expect(schur.at(0.05 * op.hopping)).toBeNull();
    expect(schur.at(0.2 * op.hopping)).not.toBeNull();
    const request = { emin: 0.03 * op.hopping, emax: 0.15 * op.hopping, points: 40 };
    const sweep = transmissionSweep(op, request);
    const direct = transmissionSweep(op, { ...request, method: 'direct' });
    expect(sweep.points.map((p) => p.energy)).toEqual(direct.points.map((p) => p.energy));
    let worst = 0;
    sweep.points.forEach((p, k) => (worst = Math.max(worst, largestDifference(p, direct.points[k]))));
    expect(worst).toBeLessThan(1e-10);
  });

  it('is not used in a magnetic field, where the sweep keeps its direct solves', () => {
    const op = operator(irregular(0.5));
    const solver = new TransmissionSolver(op);
    expect(MouthSchur.forOperator(op)).toBeNull();
    expect(solver.schurApplies).toBe(false);
    const E = 0.7 * op.hopping;
    expect(difference(solver.atBySchur(E, true), solver.at(E, true)).t).toBe(0);
  });

  it('gives the sweep of direct solves, refinement and phase tests included', () => {
    const op = operator(wire);
    const request = { emin: 12.8, emax: 15.4, points: 65, refine: { maxPoints: 300 } };
    const schur = transmissionSweep(op, request);
    const direct = transmissionSweep(op, { ...request, method: 'direct' });
    expect(schur.points.map((p) => p.energy)).toEqual(direct.points.map((p) => p.energy));
    let worst = 0;
    schur.points.forEach((p, k) => (worst = Math.max(worst, largestDifference(p, direct.points[k]))));
    expect(worst).toBeLessThan(1e-10);
    expect(schur.directSolves).toBe(direct.directSolves);
    expect(() => transmissionSweep(op, { ...request, method: 'other' as 'direct' })).toThrow(/method/);
  });
});
