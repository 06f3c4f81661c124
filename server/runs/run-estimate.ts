import { buildCavitySystem, EffectiveHamiltonian } from '../../shared/engine/effective-hamiltonian.js';
import { SparseLuPlan } from '../../shared/engine/sparse-lu.js';
import { energyValidity } from '../../shared/model/derived-figures.js';
import { POLE_SEARCH_SPECTRUM_POINTS } from '../jobs/run-job.js';
import type { RunRequest } from './run-window.js';

/**
 * Real floating-point operations per second of one engine thread on this kind of
 * machine, used only to turn the LU's predicted flop count into an expected time
 * (order of magnitude; `npm run bench` prints the measured figures).
 */
export const ENGINE_FLOPS_PER_SECOND = 1.0e9;
/** Contour nodes a window piece typically needs (quadrature + argument-principle refinement). */
const NODES_PER_PIECE = 96;

export interface RunEstimate {
  sites: number;
  pieces: number;
  thresholdsInWindow: number[];
  factorisations: number;
  expectedSeconds: number;
  warnings: string[];
}

/** What a run will cost and what to watch out for, before it is queued. Cost: one symbolic LU analysis. */
export function estimateRun(document: unknown, req: Pick<RunRequest, 'kind' | 'window'>): RunEstimate {
  const system = buildCavitySystem(document);
  const op = new EffectiveHamiltonian(system);
  const plan = SparseLuPlan.analyse(op.n, op.colPtr, op.rowIdx, { sites: op.sites });
  const { emin, emax } = req.window;
  const inside = op.thresholds.filter((e) => e > emin && e < emax);
  const pieces = inside.length + 1;
  const spectrum = req.kind === 'transmission' ? (req.window as { points: number }).points : POLE_SEARCH_SPECTRUM_POINTS;
  // The sweep's refinement adds up to about half as many energies again on typical spectra.
  const factorisations = Math.round((req.kind === 'pole-search' ? pieces * NODES_PER_PIECE : 0) + 1.5 * spectrum);
  const expectedSeconds = (factorisations * plan.factorFlops * 1.3) / ENGINE_FLOPS_PER_SECOND;

  const warnings: string[] = [];
  const validity = energyValidity(emax, op.hopping, system.spacing);
  warnings.push(...validity.warnings);
  if (inside.length > 0) {
    warnings.push(
      `${inside.length} channel threshold(s) lie inside the window; it is searched piece by piece, and poles within 3 widths of a threshold are flagged (their widths depend strongly on the exact threshold).`,
    );
  }
  const open = op.thresholds.filter((e) => e <= emin).length;
  if (open === 0 && op.thresholds.length > 0 && emax < Math.min(...op.thresholds)) {
    warnings.push('No lead channel is open anywhere in the window: only bound states can be found there.');
  }
  if (expectedSeconds > 600) warnings.push('This run is expected to take more than ten minutes.');
  return { sites: op.n, pieces, thresholdsInWindow: inside, factorisations, expectedSeconds, warnings };
}
