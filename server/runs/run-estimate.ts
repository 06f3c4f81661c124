import { buildCavitySystem, EffectiveHamiltonian } from '../../shared/engine/effective-hamiltonian.js';
import { SparseLuPlan } from '../../shared/engine/sparse-lu.js';
import { energyValidity } from '../../shared/model/derived-figures.js';
import { spectrumBudget } from '../jobs/engine-task.js';
import { POLE_SEARCH_SPECTRUM_POINTS } from '../jobs/run-job.js';
import type { RunRequest } from './run-window.js';

/**
 * Contour nodes (one LU each) a pole search spends per window piece, and per pole
 * it finds, fitted by eye to the demo devices (common practice, no source; the
 * estimate is good to about a factor of two).
 */
const NODES_PER_PIECE = 200;
const NODES_PER_POLE = 40;
/** Probe vectors of a contour node's solve (the pole search's default). */
const PROBES = 6;

export interface RunEstimate {
  sites: number;
  pieces: number;
  thresholdsInWindow: number[];
  /** Closed-cavity levels expected in the window by Weyl's law: an upper bound on the poles. */
  expectedLevels: number;
  factorisations: number;
  /** Seconds of one LU of z − H_eff and one probe solve, measured now on this machine. */
  secondsPerFactorisation: number;
  expectedSeconds: number;
  warnings: string[];
}

/**
 * What a run will cost and what to watch out for, before it is queued: one symbolic
 * analysis and one timed numeric factorisation of the model's operator.
 */
export function estimateRun(document: unknown, req: Pick<RunRequest, 'kind' | 'window'>): RunEstimate {
  const system = buildCavitySystem(document);
  const op = new EffectiveHamiltonian(system);
  const plan = SparseLuPlan.analyse(op.n, op.colPtr, op.rowIdx, { sites: op.sites });
  const { emin, emax } = req.window;
  const inside = op.thresholds.filter((e) => e > emin && e < emax);
  const pieces = inside.length + 1;

  // Weyl's law for a 2D billiard: N(E) ≈ A·E/(4π·ħ²/2m*) = sites·E/(4π t) on the lattice
  // (e.g. Stöckmann, "Quantum Chaos: An Introduction", ch. 3; leading term only).
  const expectedLevels = Math.max(0, Math.round((op.n * (Math.max(emax, 0) - Math.max(emin, 0))) / (4 * Math.PI * op.hopping)));

  const z = { re: 0.5 * (emin + emax), im: -0.25 * ('gammaMax' in req.window ? req.window.gammaMax : 0) };
  const values = new Float64Array(2 * op.rowIdx.length);
  op.assemble(z, op.sheetAt(z.re), values);
  const rhs = new Float64Array(2 * op.n * PROBES).fill(1);
  const out = new Float64Array(rhs.length);
  // The first factorisation of a plan runs cold (JIT, allocation); time the quicker of the next two.
  plan.factor(values).solve(rhs, PROBES, out);
  let secondsPerFactorisation = Infinity;
  for (let k = 0; k < 2; k++) {
    const started = performance.now();
    plan.factor(values).solve(rhs, PROBES, out);
    secondsPerFactorisation = Math.min(secondsPerFactorisation, (performance.now() - started) / 1000);
  }

  const spectrumPoints = req.kind === 'transmission' ? (req.window as { points: number }).points : POLE_SEARCH_SPECTRUM_POINTS;
  // The sweep's refinement may use its whole budget; each grid energy also costs one probe above the axis.
  const spectrumLUs = spectrumBudget(req.kind, spectrumPoints) + spectrumPoints;
  const poleLUs = req.kind === 'pole-search' ? pieces * NODES_PER_PIECE + NODES_PER_POLE * expectedLevels : 0;
  const factorisations = poleLUs + spectrumLUs;
  const expectedSeconds = factorisations * secondsPerFactorisation * 1.2;

  const warnings: string[] = [];
  warnings.push(...energyValidity(emax, op.hopping, system.spacing).warnings);
  if (inside.length > 0) {
    warnings.push(
      `${inside.length} channel threshold(s) lie inside the window; it is searched piece by piece, and poles within 3 widths of a threshold are flagged (their widths depend strongly on the exact threshold).`,
    );
  }
  if (op.thresholds.length > 0 && emax < Math.min(...op.thresholds)) {
    warnings.push('No lead channel is open anywhere in the window: only bound states can be found there.');
  }
  if (expectedSeconds > 600) warnings.push('This run is expected to take more than ten minutes.');
  return {
    sites: op.n,
    pieces,
    thresholdsInWindow: inside,
    expectedLevels,
    factorisations,
    secondsPerFactorisation,
    expectedSeconds,
    warnings,
  };
}
