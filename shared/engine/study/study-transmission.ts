/**
 * One row of a study's transmission map T(E, p): the transmission out of the model's
 * first lead into all the others, Σ_ℓ'≠0 T(0→ℓ') (the two-terminal conductance in units
 * of 2e²/h with two leads; transmission.ts, Fisher & Lee 1981), over the study's
 * window at one step. The sweep is the engine's adaptive one (transmissionSweep: a
 * uniform grid refined where T or arg det T(E) changes fast), then binned onto
 * `points` columns centred on the uniform grid: each column holds the largest T
 * sampled within half a grid step of its centre, so a resonance narrower than a
 * column still shows in the image instead of falling between two columns.
 * Cost: one sparse LU per sampled energy: the grid, as many upper-half-plane probes,
 * and the refinement, with at most 4·points energies in all (5·points LUs). Changes of
 * T below 0.1 between neighbours are not refined (the image shows columns, not a curve).
 */
import { buildCavitySystem, EffectiveHamiltonian } from '../effective-hamiltonian';
import type { WorkControl } from '../operator';
import type { PoleWindow } from '../pole-types';
import { poleAnchors, transmissionSweep, type TransmissionPoint } from '../transmission';

/** Default columns of the map (energies per step) on the server. */
export const DEFAULT_MAP_POINTS = 80;
/** Most columns a map may have. */
export const MAX_MAP_POINTS = 400;

export interface StepTransmission {
  /** Columns of the row: `points` energies evenly spaced from window.emin to window.emax. */
  points: number;
  /** Largest Σ_ℓ'≠0 T(0→ℓ') sampled within each column. */
  values: number[];
  /** Name of the first lead and of the leads it transmits into. */
  from: string;
  into: string[];
  /** Energies the sweep computed (grid and refinement). */
  samples: number;
  /** Largest current-conservation residual over the samples. */
  worstCurrentResidual: number;
  /** True when the refinement stopped on its budget with intervals still flagged. */
  budgetExhausted: boolean;
  /** Energies sampled at the step's poles (E and E ± Γ/2 of each); absent on rows stored before poles were sampled. */
  poleSamples?: number;
}

/** The column energies of a map: `points` evenly spaced energies, both window ends included. */
export function mapEnergies(window: Pick<PoleWindow, 'emin' | 'emax'>, points: number): number[] {
  return Array.from({ length: points }, (_, k) => window.emin + ((window.emax - window.emin) * k) / (points - 1));
}

/**
 * Bins sorted samples onto the columns: column k takes the largest value among the
 * samples within half a column step of its energy (the grid sample itself is one).
 */
export function binMaximum(samples: readonly { energy: number; value: number }[], energies: readonly number[]): number[] {
  const half = energies.length > 1 ? (energies[1] - energies[0]) / 2 : Infinity;
  const out = energies.map(() => -Infinity);
  let first = 0;
  energies.forEach((e, k) => {
    while (first < samples.length && samples[first].energy < e - half * (1 + 1e-12)) first++;
    for (let s = first; s < samples.length && samples[s].energy <= e + half * (1 + 1e-12); s++) out[k] = Math.max(out[k], samples[s].value);
  });
  return out.map((v) => (Number.isFinite(v) ? v : 0));
}

function outOfFirstLead(p: TransmissionPoint): number {
  let sum = 0;
  for (let to = 1; to < p.transmission[0].length; to++) sum += p.transmission[0][to];
  return sum;
}

/**
 * The map row of one model over the window, or null for a model with fewer than two
 * leads (no transmission to draw). `poles` (the step's search) are sampled at E and
 * E ± Γ/2, so every listed resonance reaches its full height in its column however
 * narrow. Throws InvalidModelError for an invalid document.
 */
export function stepTransmission(
  model: unknown,
  window: PoleWindow,
  points: number,
  control?: WorkControl,
  poles: readonly { energy: number; width: number }[] = [],
): StepTransmission | null {
  if (!Number.isInteger(points) || points < 2 || points > MAX_MAP_POINTS) throw new RangeError(`transmissionPoints: an integer from 2 to ${MAX_MAP_POINTS}`);
  const system = buildCavitySystem(model);
  if (system.leads.length < 2) return null;
  const op = new EffectiveHamiltonian(system);
  const sweep = transmissionSweep(
    op,
    { emin: window.emin, emax: window.emax, points, refine: { maxPoints: 4 * points, tolerance: 0.1 }, anchors: poleAnchors(poles) },
    control,
  );
  const energies = mapEnergies(window, points);
  return {
    points,
    values: binMaximum(
      sweep.points.map((p) => ({ energy: p.energy, value: outOfFirstLead(p) })),
      energies,
    ),
    from: system.leads[0].name,
    into: system.leads.slice(1).map((l) => l.name),
    samples: sweep.points.length,
    worstCurrentResidual: sweep.worstCurrentResidual,
    budgetExhausted: sweep.budgetExhausted,
    poleSamples: sweep.anchors,
  };
}
