/**
 * Timings of the physics layer on GaAs stadium dots with two leads: building the
 * operator, one assembly of T(E), one transmission point (LU + S matrix), a
 * refined sweep, and closed-cavity eigenvalues. Figures only, nothing asserted.
 *
 * Run: npx tsx scripts/bench-physics.ts   (one thread)
 * (scripts/bench-transmission.ts is the 10,000-site energies-per-second figure.)
 */
import { buildCavitySystem, EffectiveHamiltonian } from '../shared/engine/effective-hamiltonian';
import { TransmissionSolver, transmissionSweep } from '../shared/engine/transmission';
import { closedCavityEigenvalues } from '../shared/engine/closed-cavity';
import type { CavityModelInput } from '../shared/model/cavity-model';

function stadium(ny: number): CavityModelInput {
  const nx = Math.round(1.6 * ny);
  const a = 5;
  const radius = ((ny - 1) * a) / 2;
  const width = Math.max(2, Math.round(ny / 5));
  const start = Math.round((ny - width) / 2);
  return {
    name: `stadium ${nx}x${ny}`,
    spacing: a,
    material: 'gaas',
    grid: { nx, ny },
    // A stadium slightly shorter than the grid plus a strip through the middle for the lead mouths.
    shape: {
      kind: 'union',
      of: [
        { kind: 'stadium', cx: ((nx - 1) * a) / 2, cy: radius, length: (nx - 1) * a - 2 * radius - 4 * a, radius },
        { kind: 'rectangle', x0: 0, y0: start * a, width: nx * a, height: width * a },
      ],
    },
    field: 0.2,
    leads: [
      { side: 'left', start, width },
      { side: 'right', start, width },
    ],
  };
}

function time<T>(f: () => T): [T, number] {
  const t0 = performance.now();
  const r = f();
  return [r, performance.now() - t0];
}

console.log('sites  leadW  build ms  assemble ms  point ms  sweep(40→200) s  pts/s  closed(6) s');
for (const ny of [30, 60, 100, 160]) {
  const [op, build] = time(() => new EffectiveHamiltonian(buildCavitySystem(stadium(ny))));
  const t = op.hopping;
  const values = new Float64Array(2 * op.rowIdx.length);
  const [, assemble] = time(() => {
    for (let k = 0; k < 10; k++) op.assemble({ re: 0.1 * t, im: 0 }, op.sheetAt(0.1 * t), values);
  });
  const solver = new TransmissionSolver(op);
  solver.at(0.1 * t);
  const [, point] = time(() => {
    for (let k = 0; k < 3; k++) solver.at(0.1 * t + k * 1e-3 * t);
  });
  const [sweep, sweepMs] = time(() => transmissionSweep(op, { emin: 0.05 * t, emax: 0.15 * t, points: 40, refine: { maxPoints: 200 } }));
  const [, closedMs] = time(() => closedCavityEigenvalues(op.system.lattice, { target: 0.1 * t, count: 6 }));
  console.log(
    [
      String(op.n).padStart(5),
      String(op.system.leads[0].mouth.length).padStart(6),
      build.toFixed(1).padStart(9),
      (assemble / 10).toFixed(2).padStart(12),
      (point / 3).toFixed(1).padStart(9),
      (sweepMs / 1000).toFixed(2).padStart(16),
      (sweep.points.length / (sweepMs / 1000)).toFixed(1).padStart(6),
      (closedMs / 1000).toFixed(2).padStart(12),
    ].join(' '),
  );
}
