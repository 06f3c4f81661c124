import { describe, expect, it } from 'vitest';
import { buildCavitySystem, EffectiveHamiltonian } from '../../shared/engine/effective-hamiltonian';
import { findPoles } from '../../shared/engine/poles';
import { TransmissionSolver, transmissionSweep } from '../../shared/engine/transmission';
import { largestDifference } from '../../shared/engine/mouth-interpolation';
import { highQWire } from './high-q-wire';

const wire = highQWire;

describe('interpolated sweeps (issue 9, item 4)', () => {
  const op = new EffectiveHamiltonian(buildCavitySystem(wire));
  const t = op.hopping;
  const window = { emin: 12.8, emax: 15.4 };
  const poles = findPoles(op, { ...window, gammaMax: 0.01 }).poles;
  const narrow = poles.find((p) => (p.quality ?? 0) > 5e4)!;
  const threshold = op.thresholds.find((e) => e > window.emin && e < window.emax)!;

  it('agree with direct solves to 1e-10 at every energy, next to a Q = 10^5 resonance and across a threshold', () => {
    expect(narrow).toBeTruthy();
    expect(narrow.quality!).toBeGreaterThan(8e4);
    expect(threshold).toBeGreaterThan(window.emin);
    const request = { ...window, points: 513, refine: { maxPoints: 1200 } };
    const sweep = transmissionSweep(op, { ...request, interpolate: true });
    const direct = new TransmissionSolver(op);
    let worst = 0;
    for (const p of sweep.points) worst = Math.max(worst, largestDifference(p, direct.at(p.energy)));
    expect(worst).toBeLessThan(1e-10);
    // the refined energies (midpoints the interpolant was never fitted on) are held out too;
    // the grid alone needs fewer factorisations than energies
    const plain = transmissionSweep(op, { ...window, points: 513, interpolate: true });
    expect(plain.directSolves).toBeLessThan(513);
    expect(plain.interpolation!.fallbackBlocks).toBeLessThan(plain.interpolation!.blocks);
    // the refinement found the narrow peak: a sample within a width of it
    expect(sweep.points.some((p) => Math.abs(p.energy - narrow.energy) < narrow.width)).toBe(true);
    // the threshold lies inside the window and the sweep crosses it with the channel count changing
    const below = sweep.points.filter((p) => p.energy < threshold);
    const above = sweep.points.filter((p) => p.energy > threshold);
    expect(below[below.length - 1].channels[0]).toBe(above[0].channels[0] - 1);
    expect(Math.abs(threshold - 13.324)).toBeLessThan(1e-3 * t);
  });

  it('keeps the direct sweep unchanged when interpolation is off', () => {
    const a = transmissionSweep(op, { ...window, points: 33 });
    expect(a.directSolves).toBe(33);
    expect(a.interpolation).toBeUndefined();
  });
});
