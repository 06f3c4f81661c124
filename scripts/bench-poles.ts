/**
 * Bench of the certified pole search at 10,000 sites: a 100×100 rectangle (a = 5 nm,
 * GaAs mass) with a 10-site lead on the left and right, and a window between two
 * channel thresholds holding about 15 poles. Prints the figures; asserts nothing.
 *
 *   npx tsx scripts/bench-poles.ts
 */
import { buildCavitySystem, EffectiveHamiltonian } from '../shared/engine/effective-hamiltonian';
import { SparseLuPlan } from '../shared/engine/sparse-lu';
import { findPoles } from '../shared/engine/poles';
import type { CavityModelInput } from '../shared/model/cavity-model';

export async function benchPoles(): Promise<Record<string, number>> {
  const side = 100;
  const doc: CavityModelInput = {
    name: 'bench-rectangle',
    spacing: 5,
    material: { effectiveMass: 0.067 },
    grid: { nx: side, ny: side },
    shape: { kind: 'rectangle', x0: 0, y0: 0, width: 5 * side, height: 5 * side },
    // a weak smooth-free disorder breaks the rectangle's degeneracies, as in a real dot
    potential: [{ kind: 'disorder', strength: 0.5, seed: 11 }],
    leads: [
      { side: 'left', start: 20, width: 10 },
      { side: 'right', start: 65, width: 10 },
    ],
  };
  const op = new EffectiveHamiltonian(buildCavitySystem(doc));
  const t = op.hopping;
  const figures: Record<string, number> = { sites: op.n, hoppingMeV: t };

  let t0 = performance.now();
  const plan = SparseLuPlan.analyse(op.n, op.colPtr, op.rowIdx, { sites: op.sites });
  figures.analyseSeconds = (performance.now() - t0) / 1000;
  figures.factorNonzeros = plan.factorNonzeros;

  const sheet = op.sheetAt(0.21 * t);
  const values = new Float64Array(2 * op.colPtr[op.n]);
  op.assemble({ re: 0.21 * t, im: 1e-3 * t }, sheet, values);
  const reps = 5;
  let c0 = process.cpuUsage();
  let f = plan.factor(values);
  for (let k = 1; k < reps; k++) f = plan.factor(values);
  let c = process.cpuUsage(c0);
  figures.factorCpuMs = (c.user + c.system) / 1000 / reps;
  const rhs = new Float64Array(2 * op.n * 6).map(() => Math.random());
  c0 = process.cpuUsage();
  for (let k = 0; k < reps; k++) f.solve(rhs, 6, new Float64Array(rhs.length));
  c = process.cpuUsage(c0);
  figures.solve6CpuMs = (c.user + c.system) / 1000 / reps;

  // Between the thresholds of channels 2 and 3 of a 10-site lead (0.317t and 0.690t).
  const window = { emin: 0.4 * t, emax: 0.427 * t, gammaMax: 2e-3 * t };
  figures.windowMeVFrom = window.emin;
  figures.windowMeVTo = window.emax;
  figures.gammaMaxMeV = window.gammaMax;
  t0 = performance.now();
  const cpu0 = process.cpuUsage();
  const r = findPoles(op, window, { plan });
  figures.searchSeconds = (performance.now() - t0) / 1000;
  // CPU time of this (single-threaded) process: the wall clock above includes other load on the machine
  const cpu = process.cpuUsage(cpu0);
  figures.searchCpuSeconds = (cpu.user + cpu.system) / 1e6;
  figures.factorisations = r.stats.factorisations;
  figures.contourLUs = r.stats.contourFactorisations ?? NaN;
  figures.newtonLUs = r.stats.refineFactorisations ?? NaN;
  figures.contourNodes = r.certificate.pieces.reduce((a, p) => a + p.nodes, 0);
  figures.poles = r.poles.length;
  figures.pieces = r.certificate.pieces.length;
  figures.certified = r.certificate.certified ? 1 : 0;
  figures.worstResidual = r.poles.reduce((a, p) => Math.max(a, p.residual), 0);
  Object.assign(figures, thresholdWindows());
  return figures;
}

/**
 * A smaller irregular dot (30×30 minus a disk, leads on two sides, B = 0.7 T) searched
 * in windows that straddle channel thresholds: how many LUs a certified search takes
 * when the window is cut into pieces.
 */
function thresholdWindows(): Record<string, number> {
  const side = 30;
  const doc: CavityModelInput = {
    name: 'bench-dot',
    spacing: 5,
    material: { effectiveMass: 0.067 },
    grid: { nx: side, ny: side },
    shape: {
      kind: 'subtract',
      from: { kind: 'rectangle', x0: 0, y0: 0, width: 5 * side, height: 5 * side },
      remove: [{ kind: 'disk', cx: 100, cy: 60, radius: 20 }],
    },
    field: 0.7,
    leads: [
      { side: 'left', start: 5, width: 6 },
      { side: 'bottom', start: 12, width: 4 },
    ],
  };
  const op = new EffectiveHamiltonian(buildCavitySystem(doc));
  const t = op.hopping;
  const plan = SparseLuPlan.analyse(op.n, op.colPtr, op.rowIdx, { sites: op.sites });
  const out: Record<string, number> = {};
  const windows: [string, number, number, number][] = [
    ['dotNarrowGamma', 0.2, 1.2, 0.01],
    ['dotWideGamma', 1.0, 1.5, 0.1],
  ];
  for (const [name, a, b, g] of windows) {
    const r = findPoles(op, { emin: a * t, emax: b * t, gammaMax: g * t }, { plan });
    out[`${name}Poles`] = r.poles.length;
    out[`${name}Pieces`] = r.certificate.pieces.length;
    out[`${name}LUs`] = r.stats.factorisations;
    out[`${name}Certified`] = r.certificate.certified ? 1 : 0;
  }
  return out;
}

if (import.meta.url === `file://${process.argv[1]}`) {
  benchPoles().then((f) => {
    for (const [k, v] of Object.entries(f)) console.log(`${k.padEnd(16)} ${Number.isInteger(v) ? v : v.toPrecision(4)}`);
  });
}
