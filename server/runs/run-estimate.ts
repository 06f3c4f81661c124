import type { PhysicsKind } from '../../shared/model/physics-mode.js';
import { twoDimensionalLimitGhz, wavenumberSquared } from '../../shared/units/microwave.js';
import { readFileSync } from 'node:fs';
import { buildCavitySystem, EffectiveHamiltonian } from '../../shared/engine/effective-hamiltonian.js';
import { SparseLuPlan } from '../../shared/engine/sparse-lu.js';
import { deriveFigures, energyValidity } from '../../shared/model/derived-figures.js';
import { modelLattice, type CavityModel } from '../../shared/model/cavity-model.js';
import { ENGINE_VERSION, spectrumBudget } from '../jobs/engine-task.js';
import { POLE_SEARCH_SPECTRUM_POINTS } from '../jobs/run-job.js';
import type { RunRequest } from './run-window.js';
import type { RunEstimate } from '../../shared/api/runs.js';

/**
 * The constants of the run cost model, fitted by `npx tsx scripts/calibrate-estimate.ts`
 * to measured runs of the bench cavities and the demo devices, and stored with the
 * engine version they were measured on (run-cost-model.json beside this file).
 */
export interface RunCostModel {
  engineVersion: string;
  calibratedAt: string;
  /** How the figures were measured (machine, load average), for the reader. */
  measuredOn: string;
  /**
   * Seconds of one contour node or Newton step of a pole search: perFlop·flops + perNonzero·nnz(L+U)
   * + perSite·n + perNumericalLead·(numerical leads) + perLeadWork·leadWork (the numerical leads' mode
   * problems, see RunCostFeatures; both absent in models calibrated before numerical leads, read as 0).
   */
  poleStep: StepCost;
  /** Seconds of one energy of a transmission sweep, same form. */
  sweepEnergy: StepCost;
  /**
   * LU factorisations of a pole search: base + perPiece·pieces + perLevel·L + perLevelSquared·L²,
   * L the levels expected in the window. The square is empirical (no theory): on the
   * calibration cases the count grows about as L², through contour subdivisions and
   * Newton refinements that both grow with the poles inside.
   */
  poleLUs: { base: number; perPiece: number; perLevel: number; perLevelSquared: number };
  /** Energies a sweep computes, per energy of its grid (the adaptive refinement adds some). */
  energiesPerPoint: { poleSearch: number; transmission: number };
  /** Seconds to build the operator and analyse its pattern, per site. */
  setupPerSite: number;
  /** Accuracy measured when the constants were fitted: largest estimate/measured ratio and its inverse. */
  accuracy: { worstOver: number; worstUnder: number; cases: number };
  /** The measurements the constants were fitted to (CPU seconds, LU counts), so a refit needs no new runs. */
  measurements?: unknown[];
}

interface StepCost {
  perFlop: number;
  perNonzero: number;
  perSite: number;
  perNumericalLead?: number;
  perLeadWork?: number;
}

export type { RunEstimate } from '../../shared/api/runs.js';

/** What the cost of a run depends on; computed from the model and the window alone (no LU). */
export interface RunCostFeatures {
  sites: number;
  /** Flops of one LU as the run will take it: plan.symmetricFlops when z − H − Σ is complex symmetric (no field), else plan.factorFlops. */
  factorFlops: number;
  /** Whether the LU takes the symmetric path (diagonal pivots, one triangle: sparse-lu.ts). */
  symmetricLu?: boolean;
  factorNonzeros: number;
  /**
   * Σ over the numerical leads (honeycomb leads, leads in a field) of (2·cell size)³: the order of
   * the Schur form of each lead's mode problem, solved at every energy; 0 with closed-form leads.
   */
  leadWork: number;
  /** Leads computed from their unit cell (numerical-lead.ts). */
  numericalLeads: number;
  pieces: number;
  thresholdsInWindow: number[];
  expectedLevels: number;
  /** Energies of the sweep's grid (the spectrum beside a pole search, or the transmission run's). */
  spectrumPoints: number;
  kind: RunRequest['kind'];
  hopping: number;
  spacing: number;
  /** Honeycomb: the Dirac picture's validity warnings at the window's end farthest from E_D (the square lattice's rule does not apply). */
  diracWarnings: string[] | null;
  /** electrons (meV, nm) or microwave (k² in mm⁻², mm): the unit words of the warnings. */
  physics: PhysicsKind;
  /** Microwave: the 2D (TM0) limit c/(2h√ε_r) in GHz and as k² (mm⁻²); null for electrons. */
  twoDimensionalLimit: { ghz: number; k2: number } | null;
  allThresholds: number[];
}

/**
 * The features of a run: the operator's size, its predicted LU work from the
 * symbolic analysis (ordering and fronts, no numeric factorisation), the pieces
 * the window splits into at channel thresholds and the levels expected in it.
 * Deterministic: the same model and window give the same features. Cost: one
 * symbolic analysis, O(nnz(L)).
 */
export function runCostFeatures(document: unknown, req: Pick<RunRequest, 'kind' | 'window'>): RunCostFeatures {
  const system = buildCavitySystem(document);
  const op = new EffectiveHamiltonian(system);
  const plan = SparseLuPlan.analyse(op.n, op.colPtr, op.rowIdx, { sites: op.sites });
  const { emin, emax } = req.window;
  // Symmetric or not is a property of the model (no field anywhere), the same at every z:
  // one assembly inside the window tells (no factorisation).
  const probe = { re: 0.5 * (emin + emax), im: -1e-3 * op.hopping };
  const values = new Float64Array(2 * op.rowIdx.length);
  op.assemble(probe, op.sheetAt(probe.re), values);
  const symmetricLu = plan.takesDiagonalPivots(values);
  const inside = op.thresholds.filter((e) => e > emin && e < emax);
  // Weyl's law for a 2D billiard: N(E) ≈ A·E/(4π·ħ²/2m*) = sites·E/(4π t) on the lattice
  // (e.g. Stöckmann, "Quantum Chaos: An Introduction", ch. 3; leading term only). On the
  // honeycomb the Dirac cones (two valleys, ħv_F = 3t·a_CC/2, (3√3/4)a_CC² per atom) give
  // N(E) = sites·(√3/6π)·((E − E_D)/t)² on each side of the Dirac point E_D (from the density of
  // states ρ ∝ |E|, Castro Neto et al., RMP 81, 109 (2009), eq. 14; leading term only).
  const lattice = system.model.lattice;
  const dirac = (e: number) => {
    const d = (e - (lattice?.kind === 'honeycomb' ? 3000 * lattice.nextHopping : 0)) / op.hopping;
    return Math.sign(d) * d * d;
  };
  const expectedLevels =
    lattice?.kind === 'honeycomb'
      ? Math.max(0, Math.round(op.n * (Math.sqrt(3) / (6 * Math.PI)) * (dirac(emax) - dirac(emin))))
      : Math.max(0, Math.round((op.n * (Math.max(emax, 0) - Math.max(emin, 0))) / (4 * Math.PI * op.hopping)));
  return {
    sites: op.n,
    factorFlops: symmetricLu ? plan.symmetricFlops : plan.factorFlops,
    symmetricLu,
    factorNonzeros: plan.factorNonzeros,
    leadWork: system.leads.reduce((sum, l) => sum + (l.numerical ? (2 * l.numerical.cell.size) ** 3 : 0), 0),
    numericalLeads: system.leads.filter((l) => l.numerical).length,
    pieces: inside.length + 1,
    thresholdsInWindow: inside,
    expectedLevels,
    spectrumPoints: req.kind === 'transmission' ? (req.window as { points: number }).points : POLE_SEARCH_SPECTRUM_POINTS,
    kind: req.kind,
    hopping: op.hopping,
    spacing: system.spacing,
    diracWarnings: diracWarnings(system.model, op.n, emin, emax),
    physics: system.model.physics.kind,
    twoDimensionalLimit:
      system.model.physics.kind === 'microwave'
        ? {
            ghz: twoDimensionalLimitGhz(system.model.physics.height, system.model.physics.permittivity),
            k2: wavenumberSquared(twoDimensionalLimitGhz(system.model.physics.height, system.model.physics.permittivity), system.model.physics.permittivity),
          }
        : null,
    allThresholds: [...op.thresholds],
  };
}

/** The Dirac-picture warnings of a honeycomb model at the window's end farthest from the Dirac point; null on the square lattice. */
function diracWarnings(model: CavityModel, sites: number, emin: number, emax: number): string[] | null {
  if (modelLattice(model).kind !== 'honeycomb') return null;
  const ed = deriveFigures(model, sites).dirac?.energy ?? 0;
  const far = Math.abs(emin - ed) > Math.abs(emax - ed) ? emin : emax;
  return deriveFigures(model, sites, far).validity?.warnings ?? [];
}

const stepSeconds = (c: StepCost, f: RunCostFeatures) =>
  c.perFlop * f.factorFlops +
  c.perNonzero * f.factorNonzeros +
  c.perSite * f.sites +
  (c.perNumericalLead ?? 0) * (f.numericalLeads ?? 0) +
  (c.perLeadWork ?? 0) * (f.leadWork ?? 0);

/** The modelled time of a run, split into its parts (seconds). */
export function predictRunSeconds(f: RunCostFeatures, m: RunCostModel) {
  const L = f.expectedLevels;
  const poleLUs =
    f.kind === 'pole-search'
      ? Math.round(m.poleLUs.base + m.poleLUs.perPiece * f.pieces + m.poleLUs.perLevel * L + (m.poleLUs.perLevelSquared ?? 0) * L * L)
      : 0;
  const perPoint = f.kind === 'transmission' ? m.energiesPerPoint.transmission : m.energiesPerPoint.poleSearch;
  const energies = Math.min(spectrumBudget(f.kind, f.spectrumPoints), Math.round(perPoint * f.spectrumPoints));
  const poleStep = stepSeconds(m.poleStep, f);
  const setup = m.setupPerSite * f.sites;
  const poles = poleLUs * poleStep;
  const sweep = energies * stepSeconds(m.sweepEnergy, f);
  return { poleLUs, energies, poleStep, setup, poles, sweep, total: setup + poles + sweep };
}

const costModelFile = new URL('./run-cost-model.json', import.meta.url);
let loaded: RunCostModel | null = null;

/** The stored cost model (read once). */
export function runCostModel(): RunCostModel {
  loaded ??= JSON.parse(readFileSync(costModelFile, 'utf8')) as RunCostModel;
  return loaded;
}

/**
 * What a run will cost and what to watch out for, before it is queued: the cost
 * model applied to the run's features. Nothing is factorised or timed, so identical
 * requests get identical estimates. Runs in a compute thread (a symbolic analysis
 * at 100,000 sites takes about a second).
 */
export function estimateRun(document: unknown, req: Pick<RunRequest, 'kind' | 'window'>, model: RunCostModel = runCostModel()): RunEstimate {
  const f = runCostFeatures(document, req);
  const p = predictRunSeconds(f, model);
  const { emax } = req.window;
  const warnings: string[] = [];
  warnings.push(...(f.diracWarnings ?? energyValidity(emax, f.hopping, f.spacing, f.physics).warnings));
  if (f.twoDimensionalLimit && emax > f.twoDimensionalLimit.k2) {
    warnings.push(
      `The window reaches above the 2D limit c/(2h√ε_r) = ${f.twoDimensionalLimit.ghz.toPrecision(4)} GHz (k² = ${f.twoDimensionalLimit.k2.toPrecision(4)} mm⁻²): there the resonator's next vertical mode propagates and the 2D (TM0) model does not hold.`,
    );
  }
  if (f.thresholdsInWindow.length > 0) {
    warnings.push(
      `${f.thresholdsInWindow.length} channel threshold(s) lie inside the window; it is searched piece by piece, and poles within 3 widths of a threshold are flagged (their widths depend strongly on the exact threshold).`,
    );
  }
  if (f.allThresholds.length > 0 && emax < Math.min(...f.allThresholds)) {
    warnings.push('No lead channel is open anywhere in the window: only bound states can be found there.');
  }
  if (model.engineVersion !== ENGINE_VERSION) {
    warnings.push(
      `The time is estimated with figures measured on ${model.engineVersion}, not the running ${ENGINE_VERSION}; it may be off until the cost model is calibrated again.`,
    );
  }
  if (p.total > 600) warnings.push('This run is expected to take more than ten minutes.');
  return {
    sites: f.sites,
    pieces: f.pieces,
    thresholdsInWindow: f.thresholdsInWindow,
    expectedLevels: f.expectedLevels,
    factorisations: p.poleLUs + p.energies,
    secondsPerFactorisation: p.poleStep,
    expectedSeconds: p.total,
    method: { kind: 'cost-model', engineVersion: model.engineVersion, calibratedAt: model.calibratedAt },
    warnings,
  };
}
