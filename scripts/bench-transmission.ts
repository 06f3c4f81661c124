/**
 * Transmission sweep speed at 10,000 sites: a 100×100 GaAs rectangle (a = 5 nm) with
 * a 10-site lead on the left and right; energies per second on one thread, for a
 * uniform sweep (no refinement) reusing one LU analysis. Prints figures only.
 *
 *   npx tsx scripts/bench-transmission.ts
 */
import { buildCavitySystem, EffectiveHamiltonian } from '../shared/engine/effective-hamiltonian';
import { transmissionSweep } from '../shared/engine/transmission';
import { largestDifference } from '../shared/engine/mouth-interpolation';
import { loadavg } from 'node:os';
import type { CavityModelInput } from '../shared/model/cavity-model';

export function rectangleModel(side: number): CavityModelInput {
  return {
    name: `bench rectangle ${side}×${side}`,
    spacing: 5,
    material: 'gaas',
    grid: { nx: side, ny: side },
    shape: { kind: 'rectangle', x0: 0, y0: 0, width: 5 * side, height: 5 * side },
    leads: [
      { side: 'left', start: Math.round(side * 0.2), width: 10 },
      { side: 'right', start: Math.round(side * 0.65), width: 10 },
    ],
  };
}

export async function benchTransmission(points = 200): Promise<Record<string, number>> {
  const op = new EffectiveHamiltonian(buildCavitySystem(rectangleModel(100)));
  const t = op.hopping;
  const started = performance.now();
  const sweep = transmissionSweep(op, { emin: 0.05 * t, emax: 0.45 * t, points });
  const seconds = (performance.now() - started) / 1000;
  const figures = {
    sites: op.n,
    energies: sweep.points.length,
    seconds,
    energiesPerSecond: sweep.points.length / seconds,
    projected1000EnergySweepSeconds: (1000 * seconds) / sweep.points.length,
    worstCurrentResidual: sweep.worstCurrentResidual,
  };
  return figures;
}

/**
 * A 1,000-energy sweep at 10,000 sites, by one LU per energy and by the interpolated
 * mouth resolvent (mouth-interpolation.ts): time, factorisations, and the largest
 * |ΔT| between the two over every energy.
 */
export async function benchSweep1000(points = 1000): Promise<Record<string, number | string>> {
  const op = new EffectiveHamiltonian(buildCavitySystem(rectangleModel(100)));
  const t = op.hopping;
  const request = { emin: 0.05 * t, emax: 0.45 * t, points };
  const load = loadavg()[0];
  let started = performance.now();
  const direct = transmissionSweep(op, request);
  const directSeconds = (performance.now() - started) / 1000;
  started = performance.now();
  const interpolated = transmissionSweep(op, { ...request, interpolate: true });
  const interpolatedSeconds = (performance.now() - started) / 1000;
  let worst = 0;
  direct.points.forEach((p, k) => (worst = Math.max(worst, largestDifference(p, interpolated.points[k]))));
  return {
    sites: op.n,
    energies: points,
    'direct: seconds': directSeconds,
    'direct: factorisations': direct.directSolves,
    'interpolated: seconds': interpolatedSeconds,
    'interpolated: factorisations': interpolated.directSolves,
    'interpolated: blocks solved directly': `${interpolated.interpolation?.fallbackBlocks} of ${interpolated.interpolation?.blocks}`,
    'max |ΔT| over all energies': worst,
    'load average (1 min) at start': load,
  };
}

if (import.meta.url === `file://${process.argv[1]}`) {
  const f = await benchTransmission();
  for (const [k, v] of Object.entries(f)) console.log(`${k.padEnd(34)} ${Number.isInteger(v) ? v : v.toPrecision(4)}`);
}
