/**
 * Transmission through the open cavity at real energies (docs/physics-model.md,
 * "Observables"): S = −1 + i·W†GW in the open channels, G = T(E)⁻¹ with
 * T(E) = E − H − Σ(E), W the coupling columns sqrt(2t sin k_m)·χ_m (with mouth
 * phases), so that T(ℓ→ℓ') = Σ_{a∈ℓ', b∈ℓ}|S_ab|² = Tr[Γ_ℓ' G Γ_ℓ G†]
 * (Fisher & Lee, Phys. Rev. B 23, 6851 (1981); Mahaux & Weidenmüller, "Shell-Model
 * Approach to Nuclear Reactions" (1969) for the S-matrix form).
 * Conductance in units of 2e²/h (spin degenerate): G/(2e²/h) = T. Energies in meV.
 * Cost per energy: one sparse LU of T(E) plus N_open solves; with a real Hamiltonian,
 * sweeps take G on the mouths from the closed cavity's Schur complement instead
 * (mouth-schur.ts: a real partial factorisation, no solves), the same values to rounding.
 */
import { checkCancelled, type WorkControl } from './operator';
import { SparseLuPlan, type SparseLuFactors } from './sparse-lu';
import type { EffectiveHamiltonian } from './effective-hamiltonian';
import { MouthInterpolation, type MouthInterpolationOptions, type MouthSolver } from './mouth-interpolation';
import { MouthSpectral, type MouthSpectralOptions, type MouthSpectralSummary } from './mouth-spectral';
import { MouthSchur } from './mouth-schur';
import { mouthOrder, pointFromMouth, scatteringPoint, type TransmissionPoint } from './scattering-point';

export { type TransmissionPoint } from './scattering-point';

/** A reusable evaluator: one symbolic analysis of T's pattern serves every energy. */
export class TransmissionSolver {
  /** Analysed on first use: a sweep by the Schur complement never needs it. */
  private analysed: SparseLuPlan | undefined;
  private readonly values: Float64Array;
  /** The last energy's LU, finished with: the next factorisation takes over its storage. */
  private spare: SparseLuFactors | undefined;
  /** The Schur-complement path, analysed on first use; null where it does not apply. */
  private schur: MouthSchur | null | undefined;
  /** Energies tried on the Schur path, and those it left to the direct solve (atBySchur). */
  private schurTries = 0;
  private schurMisses = 0;

  constructor(
    readonly op: EffectiveHamiltonian,
    plan?: SparseLuPlan,
  ) {
    this.analysed = plan;
    this.values = new Float64Array(2 * op.rowIdx.length);
  }

  private get plan(): SparseLuPlan {
    this.analysed ??= SparseLuPlan.analyse(this.op.n, this.op.colPtr, this.op.rowIdx, { sites: this.op.sites });
    return this.analysed;
  }

  /** arg det T(z) (rad) at a complex energy, sheet chosen by Re z; one LU, no solves. */
  detPhase(z: { re: number; im: number }): number {
    this.op.assemble(z, this.op.sheetAt(z.re), this.values);
    const lu = this.factor();
    const arg = lu.logDet().arg;
    this.spare = lu;
    return arg;
  }

  /** LU of the assembled values; never referenced after the caller hands it back as spare. */
  private factor(): SparseLuFactors {
    const spare = this.spare;
    // Cleared first: a factorisation that throws leaves the spare released.
    this.spare = undefined;
    return this.plan.factor(this.values, spare);
  }

  /** Transmission, reflection, S matrix checks and det phase at a real energy E (meV). */
  at(energy: number, withS = false): TransmissionPoint {
    if (!Number.isFinite(energy)) throw new RangeError(`transmission: energy must be a finite number of meV, got ${energy}`);
    const op = this.op;
    const n = op.n;
    const sheet = op.sheetAt(energy);
    op.assemble({ re: energy, im: 0 }, sheet, this.values);
    const lu = this.factor();
    const w = op.couplingColumns(energy);
    const count = w.count;
    const leads = op.leadCount;
    const s = new Float64Array(2 * count * count);
    if (count > 0) {
      // solve() works in place unless given an output buffer; W is still needed below.
      const x = lu.solve(w.values, count, new Float64Array(w.values.length));
      // S_ab = −δ_ab + i Σ_s conj(W_sa)·X_sb, summed over a's mouth only (W is zero elsewhere).
      for (let a = 0; a < count; a++) {
        const mouth = op.mouthSites(w.lead[a]);
        for (let b = 0; b < count; b++) {
          let re = 0;
          let im = 0;
          for (const site of mouth) {
            const wr = w.values[2 * (a * n + site)];
            const wi = w.values[2 * (a * n + site) + 1];
            const xr = x[2 * (b * n + site)];
            const xi = x[2 * (b * n + site) + 1];
            re += wr * xr + wi * xi;
            im += wr * xi - wi * xr;
          }
          // i·(re + i·im) = −im + i·re
          s[2 * (a * count + b)] = -im - (a === b ? 1 : 0);
          s[2 * (a * count + b) + 1] = re;
        }
      }
    }
    const point = scatteringPoint(energy, s, w, leads, lu.logDet().arg, withS);
    // Nothing returned refers to lu (x and s are plain arrays), so its storage can be reused.
    this.spare = lu;
    return point;
  }

  /**
   * The point at E from G on the mouths by the closed cavity's Schur complement
   * (mouth-schur.ts) where it applies (a real Hamiltonian: no magnetic field), else by
   * at(E); both give the same point to rounding. The first call analyses the pattern
   * once more, with the mouth sites ordered last.
   */
  atBySchur(energy: number, withS = false): TransmissionPoint {
    if (!Number.isFinite(energy)) throw new RangeError(`transmission: energy must be a finite number of meV, got ${energy}`);
    if (this.schur === undefined) this.schur = MouthSchur.forOperator(this.op);
    const green = this.schur?.at(energy);
    if (this.schur) {
      this.schurTries++;
      if (!green) this.schurMisses++;
      // Mostly left to the direct solve (many delayed pivots): stop paying for the partial factorisation.
      if (this.schurTries >= 8 && this.schurMisses * 4 > this.schurTries) this.schur = null;
    }
    return green ? pointFromMouth(this.op, energy, green.mouth, green.detPhase, withS) : this.at(energy, withS);
  }

  /** Whether atBySchur uses the Schur complement for this operator (analyses it on first call). */
  get schurApplies(): boolean {
    if (this.schur === undefined) this.schur = MouthSchur.forOperator(this.op);
    return this.schur !== null;
  }

  /**
   * The point at E by a direct solve, and G_mouth = P T(E)⁻¹ Pᵀ on the mouth sites of
   * every lead (in lead order, M×M row-major interleaved): one LU and M solves.
   */
  atMouth(energy: number): { point: TransmissionPoint; mouth: Float64Array } {
    if (!Number.isFinite(energy)) throw new RangeError(`transmission: energy must be a finite number of meV, got ${energy}`);
    const op = this.op;
    const n = op.n;
    op.assemble({ re: energy, im: 0 }, op.sheetAt(energy), this.values);
    const lu = this.factor();
    const sites = mouthOrder(op);
    const M = sites.length;
    const rhs = new Float64Array(2 * n * M);
    sites.forEach((site, c) => (rhs[2 * (c * n + site)] = 1));
    lu.solve(rhs, M);
    const mouth = new Float64Array(2 * M * M);
    for (let c = 0; c < M; c++)
      for (let r = 0; r < M; r++) {
        mouth[2 * (r * M + c)] = rhs[2 * (c * n + sites[r])];
        mouth[2 * (r * M + c) + 1] = rhs[2 * (c * n + sites[r]) + 1];
      }
    const point = pointFromMouth(op, energy, mouth, lu.logDet().arg);
    this.spare = lu;
    return { point, mouth };
  }
}
/** Transmission at one energy (analyses the pattern; use TransmissionSolver for many energies). */
export function transmissionAt(op: EffectiveHamiltonian, energy: number, withS = false): TransmissionPoint {
  return new TransmissionSolver(op).at(energy, withS);
}

interface SweepRefinement {
  /** Largest total number of energies, grid included. */
  maxPoints: number;
  /** Largest change of any T(ℓ→ℓ') or R_ℓ allowed between neighbouring energies, and between a
   *  sample and the straight line through its neighbours (curvature). Default 0.02. */
  tolerance?: number;
  /** Largest change of arg det T(E) (rad) allowed between neighbours; default 0.5. */
  phaseTolerance?: number;
  /** Intervals narrower than this (meV) are never split; default 1e-6·t. */
  minWidth?: number;
  /**
   * Probe arg det T(E + iη) just above the axis (η = the grid step) at every grid
   * energy and split the grid steps it flags down to step/16; default true. Costs
   * one more LU per grid energy and catches several resonances in one step.
   */
  upperProbe?: boolean;
  /** Phase change (rad) of the upper probe across a grid step that flags it; default 0.4. */
  probeTolerance?: number;
}

interface SweepRequest {
  emin: number;
  emax: number;
  /** Points of the uniform grid (≥ 2), both ends included. */
  points: number;
  refine?: SweepRefinement;
  /**
   * Energies sampled besides the grid (e.g. the listed poles' E and E ± Γ/2, so that every
   * known resonance's peak is on the curve however narrow); those outside (emin, emax) or
   * on a grid energy are skipped. They come on top of refine.maxPoints.
   */
  anchors?: readonly number[];
  /** An analysed plan of op's pattern to reuse (e.g. shared with a pole search). */
  plan?: SparseLuPlan;
  /**
   * Interpolate the closed cavity's mouth resolvent between direct solves (block AAA,
   * mouth-interpolation.ts), checked against direct solves at held-out energies, with
   * direct solves wherever the check fails; default off (one LU per energy).
   */
  interpolate?: boolean | MouthInterpolationOptions;
  /**
   * Evaluate the closed cavity's mouth resolvent from its eigenpairs near the window plus
   * a Chebyshev remainder (mouth-spectral.ts), checked against direct solves at held-out
   * energies, with one direct solve per energy if the check fails; default off. Takes
   * precedence over `interpolate`.
   */
  spectral?: boolean | MouthSpectralOptions;
  /**
   * How each energy is evaluated without interpolation: 'schur' (default) takes G on the
   * mouths from the closed cavity's Schur complement where the Hamiltonian is real
   * (mouth-schur.ts) and a direct LU elsewhere; 'direct' always factorises T(E) and
   * solves with the open channels. Both give the same points to rounding.
   */
  method?: 'schur' | 'direct';
}

/** Sweep anchors that put each pole's peak on the curve: E − Γ/2, E and E + Γ/2 of every pole. */
export function poleAnchors(poles: readonly { energy: number; width: number }[]): number[] {
  return poles.flatMap((p) => [p.energy - p.width / 2, p.energy, p.energy + p.width / 2]);
}

interface TransmissionSweep {
  /** Samples sorted by energy. */
  points: TransmissionPoint[];
  /** Size of the uniform grid and how many refinement passes ran. */
  gridPoints: number;
  passes: number;
  /** True when the refinement stopped on maxPoints with intervals still flagged. */
  budgetExhausted: boolean;
  /** Anchor energies sampled (request.anchors inside the window, off the grid). */
  anchors: number;
  /** Largest current-conservation and unitarity residuals over all samples. */
  worstCurrentResidual: number;
  worstUnitarityResidual: number;
  /** LU factorisations spent (one per energy, upper probes included; with `spectral`, the closed cavity's too). */
  directSolves: number;
  /** With `spectral`: whether it served the sweep, eigenpairs, nodes, held-out |ΔT|. */
  spectral?: MouthSpectralSummary;
  /** With interpolation: blocks, blocks computed directly, and the largest |ΔT| at held-out energies. */
  interpolation?: { blocks: number; fallbackBlocks: number; worstHeldOut: number };
}

function largestChange(a: TransmissionPoint, b: TransmissionPoint): number {
  let d = 0;
  for (let l = 0; l < a.reflection.length; l++) {
    d = Math.max(d, Math.abs(a.reflection[l] - b.reflection[l]));
    for (let m = 0; m < a.reflection.length; m++) d = Math.max(d, Math.abs(a.transmission[l][m] - b.transmission[l][m]));
  }
  return d;
}

/** Deviation of `mid` from the straight line through `left` and `right`, largest over entries. */
function curvature(left: TransmissionPoint, mid: TransmissionPoint, right: TransmissionPoint): number {
  const u = (mid.energy - left.energy) / (right.energy - left.energy);
  let d = 0;
  const lerp = (x: number, y: number) => x + u * (y - x);
  for (let l = 0; l < mid.reflection.length; l++) {
    d = Math.max(d, Math.abs(mid.reflection[l] - lerp(left.reflection[l], right.reflection[l])));
    for (let m = 0; m < mid.reflection.length; m++) {
      d = Math.max(d, Math.abs(mid.transmission[l][m] - lerp(left.transmission[l][m], right.transmission[l][m])));
    }
  }
  return d;
}

function phaseStep(a: TransmissionPoint, b: TransmissionPoint): number {
  const d = b.detPhase - a.detPhase;
  return Math.abs(Math.atan2(Math.sin(d), Math.cos(d)));
}

/** Grid steps flagged by the upper probe are split down to step / 2^PROBE_DEPTH. */
const PROBE_DEPTH = 4;

/**
 * Transmission on a uniform grid, then adaptive bisection. An interval is split
 * when T or R changes across it by more than `tolerance`, when a neighbouring
 * sample sits off the straight line by more than `tolerance` (curvature), or
 * when arg det T(E) changes by more than `phaseTolerance`. The last test is what
 * finds a resonance narrower than the grid step: det T(E) ≈ Π(E − z_n)·(smooth),
 * and arg(E − z_n) falls by π across E_n however small Γ_n is, while far poles
 * turn it only by about step/distance. Two narrow poles inside one step turn it
 * by 2π and would cancel, so (upperProbe) arg det T(E + iη) with η = step is also
 * sampled on the grid: there each pole under a step turns the phase smoothly by
 * 2·atan(step/2η) ≈ 0.93 rad, several poles add up instead of cancelling, and a
 * flagged step is split to step/16 so that its poles fall into separate pieces.
 * Passes split the most-flagged intervals first until none is flagged, all are
 * narrower than minWidth, or maxPoints is reached. One LU analysis for all.
 */
export function transmissionSweep(op: EffectiveHamiltonian, request: SweepRequest, control?: WorkControl): TransmissionSweep {
  const { emin, emax, points } = request;
  if (!Number.isFinite(emin) || !Number.isFinite(emax) || !(emax > emin)) {
    throw new RangeError(`transmissionSweep: need finite emin < emax (meV), got emin = ${emin}, emax = ${emax}`);
  }
  if (!Number.isInteger(points) || points < 2) throw new RangeError(`transmissionSweep: points must be an integer ≥ 2, got ${points}`);
  const refine = request.refine;
  if (refine && (!Number.isInteger(refine.maxPoints) || refine.maxPoints < points)) {
    throw new RangeError(`transmissionSweep: refine.maxPoints must be an integer ≥ points (${points}), got ${refine.maxPoints}`);
  }
  const grid = Array.from({ length: points }, (_, k) => emin + ((emax - emin) * k) / (points - 1));
  const onGrid = new Set(grid);
  const anchors = [...new Set(request.anchors ?? [])].filter((e) => Number.isFinite(e) && e > emin && e < emax && !onGrid.has(e));
  const maxPoints = (refine ? refine.maxPoints : points) + anchors.length;
  const tolerance = refine?.tolerance ?? 0.02;
  const phaseTolerance = refine?.phaseTolerance ?? 0.5;
  const minWidth = refine?.minWidth ?? 1e-6 * op.hopping;
  const solver = new TransmissionSolver(op, request.plan);
  const probing = !!refine && refine.upperProbe !== false;
  // Work units: one per transmission sample plus one per probe LU.
  const total = maxPoints + (probing ? points : 0);
  let probes = 0;
  const report = (done: number) => control?.onProgress?.('transmission', Math.min(1, (done + probes) / total));

  if (request.method !== undefined && request.method !== 'schur' && request.method !== 'direct') {
    throw new RangeError(`transmissionSweep: method must be 'schur' or 'direct', got ${String(request.method)}`);
  }
  const bySchur = request.method !== 'direct';
  // the interpolated and spectral sweeps fall back to the same per-energy evaluation as a plain sweep
  const pointSolver: MouthSolver = { at: (E) => (bySchur ? solver.atBySchur(E) : solver.at(E)), atMouth: (E) => solver.atMouth(E) };
  let directSolves = 0;
  const spectral = request.spectral
    ? new MouthSpectral(op, pointSolver, grid, request.spectral === true ? {} : request.spectral, () => checkCancelled(control))
    : null;
  const interpolation = spectral
    ? spectral
    : request.interpolate
      ? new MouthInterpolation(op, pointSolver, grid, request.interpolate === true ? {} : request.interpolate, () => checkCancelled(control))
      : null;
  const evaluate = (E: number): TransmissionPoint => {
    if (interpolation) return interpolation.at(E);
    // one factorisation either way: the Schur path's is a partial one in real numbers
    directSolves++;
    return pointSolver.at(E);
  };
  let samples: TransmissionPoint[] = [];
  for (let k = 0; k < points; k++) {
    checkCancelled(control);
    samples.push(evaluate(grid[k]));
    report(samples.length);
  }
  // Upper-half-plane probe: the physical Σ is analytic there and both sheet formulas
  // give it (|λ| < 1), so the phase varies on the scale η and cannot jump.
  const step = (emax - emin) / (points - 1);
  const suspect = new Uint8Array(points - 1);
  if (refine && probing) {
    const probeTolerance = refine.probeTolerance ?? 0.4;
    let previous = 0;
    let previousKnown = false;
    for (let k = 0; k < points; k++) {
      checkCancelled(control);
      // with interpolation the probe comes from the block's interpolant where it has one
      const free = interpolation && k > 0 ? interpolation.probeStep(samples[k - 1].energy, samples[k].energy, step) : null;
      if (free !== null) {
        if (free > probeTolerance) suspect[k - 1] = 1;
        previousKnown = false;
        continue;
      }
      if (!previousKnown && k > 0) {
        previous = solver.detPhase({ re: samples[k - 1].energy, im: step });
        directSolves++;
      }
      const phase = solver.detPhase({ re: samples[k].energy, im: step });
      directSolves++;
      probes++;
      report(samples.length);
      if (k > 0) {
        const d = phase - previous;
        if (Math.abs(Math.atan2(Math.sin(d), Math.cos(d))) > probeTolerance) suspect[k - 1] = 1;
      }
      previous = phase;
      previousKnown = true;
    }
  }
  for (const e of anchors) {
    checkCancelled(control);
    samples.push(evaluate(e));
    report(samples.length);
  }
  if (anchors.length) samples.sort((x, y) => x.energy - y.energy);
  const forcedWidth = step / 2 ** PROBE_DEPTH;
  let passes = 0;
  let budgetExhausted = false;
  while (refine) {
    const flagged: { k: number; score: number }[] = [];
    for (let k = 0; k + 1 < samples.length; k++) {
      const a = samples[k];
      const b = samples[k + 1];
      if (b.energy - a.energy < 2 * minWidth) continue;
      let score = Math.max(largestChange(a, b) / tolerance, phaseStep(a, b) / phaseTolerance);
      if (k > 0) score = Math.max(score, curvature(samples[k - 1], a, b) / tolerance);
      if (k + 2 < samples.length) score = Math.max(score, curvature(a, b, samples[k + 2]) / tolerance);
      if (b.energy - a.energy > forcedWidth * (1 + 1e-9)) {
        const coarse = Math.min(points - 2, Math.floor((0.5 * (a.energy + b.energy) - emin) / step));
        if (suspect[coarse]) score = Math.max(score, 1.01);
      }
      if (score > 1) flagged.push({ k, score });
    }
    if (!flagged.length) break;
    const room = maxPoints - samples.length;
    if (room <= 0) {
      budgetExhausted = true;
      break;
    }
    flagged.sort((x, y) => y.score - x.score);
    const chosen = flagged.slice(0, room);
    if (chosen.length < flagged.length) budgetExhausted = true;
    for (const { k } of chosen) {
      checkCancelled(control);
      samples.push(evaluate((samples[k].energy + samples[k + 1].energy) / 2));
      report(samples.length);
    }
    samples = samples.sort((x, y) => x.energy - y.energy);
    passes++;
    if (budgetExhausted) break;
  }
  control?.onProgress?.('transmission', 1);
  let worstCurrentResidual = 0;
  let worstUnitarityResidual = 0;
  for (const p of samples) {
    worstCurrentResidual = Math.max(worstCurrentResidual, p.currentResidual);
    worstUnitarityResidual = Math.max(worstUnitarityResidual, p.unitarityResidual);
  }
  if (interpolation) directSolves += interpolation.directSolves;
  if (spectral) directSolves += spectral.closedFactorisations;
  return {
    points: samples,
    gridPoints: points,
    passes,
    budgetExhausted,
    anchors: anchors.length,
    worstCurrentResidual,
    worstUnitarityResidual,
    directSolves,
    ...(spectral ? { spectral: spectral.summary() } : interpolation instanceof MouthInterpolation ? { interpolation: interpolation.summary() } : {}),
  };
}
