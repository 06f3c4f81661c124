import { describe, expect, it } from 'vitest';
import { buildCavitySystem, EffectiveHamiltonian } from '../../shared/engine/effective-hamiltonian';
import { findPoles } from '../../shared/engine/poles';
import { TransmissionSolver, transmissionSweep, type TransmissionPoint } from '../../shared/engine/transmission';
import { largestDifference } from '../../shared/engine/mouth-interpolation';
import { hamiltonianCsc } from '../../shared/engine/lattice';
import type { CavityModelInput } from '../../shared/model/cavity-model';
import { highQWire } from './high-q-wire';

const wire = highQWire;

/** A 30 × 30 square (two-fold degenerate closed-cavity levels E_nm = E_mn) with two 10-site leads. */
const square: CavityModelInput = {
  name: 'square',
  spacing: 5,
  material: 'gaas',
  grid: { nx: 30, ny: 30 },
  shape: { kind: 'rectangle', x0: 0, y0: 0, width: 150, height: 150 },
  leads: [
    { side: 'left', start: 6, width: 10 },
    { side: 'right', start: 19, width: 10 },
  ],
};

/** A 24 × 18 rectangle at 2 T (complex Hermitian H: Peierls phases) with a left and a bottom lead. */
const inField: CavityModelInput = {
  name: 'rectangle in a field',
  spacing: 5,
  material: 'gaas',
  grid: { nx: 24, ny: 18 },
  shape: { kind: 'rectangle', x0: 0, y0: 0, width: 120, height: 90 },
  field: 2,
  leads: [
    { side: 'left', start: 4, width: 6 },
    { side: 'bottom', start: 12, width: 6 },
  ],
};

function worstAgainstDirect(op: EffectiveHamiltonian, points: TransmissionPoint[]): number {
  const direct = new TransmissionSolver(op);
  let worst = 0;
  for (const p of points) worst = Math.max(worst, largestDifference(p, direct.at(p.energy)));
  return worst;
}

describe('spectral sweeps (issue 9, item 4)', () => {
  it('agree with direct solves to 1e-10 at every energy, next to a Q = 10^5 resonance and across a threshold', () => {
    const op = new EffectiveHamiltonian(buildCavitySystem(wire));
    const window = { emin: 12.8, emax: 15.4 };
    const narrow = findPoles(op, { ...window, gammaMax: 0.01 }).poles.find((p) => (p.quality ?? 0) > 5e4)!;
    expect(narrow.quality!).toBeGreaterThan(8e4);
    const threshold = op.thresholds.find((e) => e > window.emin && e < window.emax)!;
    expect(threshold).toBeGreaterThan(window.emin);
    const sweep = transmissionSweep(op, { ...window, points: 513, refine: { maxPoints: 1200 }, spectral: true });
    expect(sweep.spectral!.used).toBe(true);
    // refined energies (never nodes nor held out) are compared too
    expect(sweep.points.length).toBeGreaterThan(513);
    expect(worstAgainstDirect(op, sweep.points)).toBeLessThan(1e-10);
    // the refinement, fed by the spectral form's phase, found the narrow peak
    expect(sweep.points.some((p) => Math.abs(p.energy - narrow.energy) < narrow.width)).toBe(true);
    const below = sweep.points.filter((p) => p.energy < threshold);
    const above = sweep.points.filter((p) => p.energy > threshold);
    expect(below[below.length - 1].channels[0]).toBe(above[0].channels[0] - 1);
    // energies within 1e-9 meV of the resonance, where the closed cavity's pole term is kept apart
    const solver = new TransmissionSolver(op);
    const close = transmissionSweep(op, { emin: narrow.energy - 1e-9, emax: narrow.energy + 1e-9, points: 9, spectral: true });
    for (const p of close.points) expect(largestDifference(p, solver.at(p.energy))).toBeLessThan(1e-10);
  });

  it('hold degenerate levels (a square) and agree with direct solves; the phase of det T matches too', () => {
    const op = new EffectiveHamiltonian(buildCavitySystem(square));
    const t = op.hopping;
    const sweep = transmissionSweep(op, { emin: 0.05 * t, emax: 0.45 * t, points: 301, spectral: true });
    const s = sweep.spectral!;
    expect(s.used).toBe(true);
    // Weyl's law for the window widened by the margins, about 40 levels at 900 sites
    expect(s.eigenpairs).toBeGreaterThan(30);
    expect(s.worstEigenResidual).toBeLessThan(1e-9 * t);
    expect(worstAgainstDirect(op, sweep.points)).toBeLessThan(1e-10);
    const solver = new TransmissionSolver(op);
    for (const p of sweep.points.filter((_, k) => k % 37 === 5)) {
      const d = p.detPhase - solver.at(p.energy).detPhase;
      expect(Math.abs(Math.atan2(Math.sin(d), Math.cos(d)))).toBeLessThan(1e-6);
    }
    // far fewer factorisations than energies: nodes, margin shifts and held-out solves
    expect(sweep.directSolves).toBeLessThan(80);
  });

  it('work for a complex Hermitian H (a field)', () => {
    const op = new EffectiveHamiltonian(buildCavitySystem(inField));
    const t = op.hopping;
    expect(hamiltonianCsc(op.system.lattice).values.some((v, k) => k % 2 === 1 && v !== 0)).toBe(true);
    const sweep = transmissionSweep(op, { emin: 0.1 * t, emax: 0.5 * t, points: 201, spectral: true });
    expect(sweep.spectral!.used).toBe(true);
    expect(worstAgainstDirect(op, sweep.points)).toBeLessThan(1e-10);
  });

  it('fall back to one direct solve per energy when the held-out check fails, with the same points', () => {
    const op = new EffectiveHamiltonian(buildCavitySystem(wire));
    const window = { emin: 12.8, emax: 15.4, points: 41 };
    const strict = transmissionSweep(op, { ...window, spectral: { tolerance: -1 } });
    expect(strict.spectral!.used).toBe(false);
    expect(strict.spectral!.reason).toMatch(/held-out check failed/);
    const direct = transmissionSweep(op, window);
    strict.points.forEach((p, k) => expect(largestDifference(p, direct.points[k])).toBe(0));
  });
});
