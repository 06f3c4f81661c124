/**
 * Transmission at many energies with few factorisations. The cavity enters the
 * transmission only through its Green's function on the lead mouths,
 *   G_mouth(E) = P (E − H − Σ(E))⁻¹ Pᵀ = (g(E)⁻¹ − Σ(E))⁻¹ = (1 − g(E)Σ(E))⁻¹ g(E),
 * where g(E) = P (E − H)⁻¹ Pᵀ is the closed cavity's resolvent on the M mouth sites:
 * a rational M×M function with real poles (the eigenvalues of H) and rank-one
 * residues, with no lead dependence, so it is smooth across channel thresholds
 * (Σ(E) is computed exactly at every energy). The energies are cut into blocks; in
 * each block g is computed by direct solves at a few energies (g from G_mouth:
 * g = (1 + G_mouth Σ)⁻¹ G_mouth), interpolated with the block form of AAA
 * (block-aaa.ts), and checked against direct solves at held-out energies; a block
 * whose check fails is computed by direct solves at every energy.
 *
 * det T for the refinement's phase rule: det(E − H − Σ) = det(E − H)·det(1 − gΣ), and
 * with g ≈ D⁻¹N the polynomial det D(z)·Π_j(z − z_j)^M vanishes at the poles of g, so
 * arg det T(z) = const + M·Σ_j arg(z − z_j) + arg det(D(z) − N(z)Σ(z)) up to the
 * slowly varying phase of eigenvalues the block does not see; the constant is set per
 * block from a direct solve.
 */
import type { EffectiveHamiltonian } from './effective-hamiltonian';
import { evaluateBlockRational, fitBlockRational, matMul, solveDense, type BlockRational } from './block-aaa';
import { mouthOrder, pointFromMouth, type TransmissionPoint } from './scattering-point';

/** What the interpolation asks of a direct solver (TransmissionSolver in transmission.ts). */
export interface MouthSolver {
  at(energy: number): TransmissionPoint;
  atMouth(energy: number): { point: TransmissionPoint; mouth: Float64Array };
}

/** Options of the interpolated evaluation. */
export interface MouthInterpolationOptions {
  /** Largest |ΔT| (any T or R entry) allowed at a held-out energy; default 1e-11. */
  tolerance?: number;
  /** Grid steps per block; default 64. */
  blockSteps?: number;
  /** Grid steps between direct solves inside a block; default 4. */
  sampleStep?: number;
}

interface Block {
  lo: number;
  hi: number;
  /** Null when the block fell back to direct solves. */
  rational: BlockRational | null;
  phaseOffset: number;
  /** Largest |ΔT| seen at the held-out and least-squares energies. */
  error: number;
}

/** Σ of every lead on the mouth, block diagonal M×M (the order of mouthOrder). */
export function mouthSelfEnergy(op: EffectiveHamiltonian, zRe: number, zIm: number, sheetRe = zRe): Float64Array {
  const M = mouthOrder(op).length;
  const out = new Float64Array(2 * M * M);
  const sheet = op.sheetAt(sheetRe);
  let off = 0;
  for (let l = 0; l < op.leadCount; l++) {
    const w = op.mouthSites(l).length;
    const block = op.selfEnergy(l, { re: zRe, im: zIm }, sheet);
    for (let p = 0; p < w; p++)
      for (let q = 0; q < w; q++) {
        out[2 * ((off + p) * M + off + q)] = block[2 * (p * w + q)];
        out[2 * ((off + p) * M + off + q) + 1] = block[2 * (p * w + q) + 1];
      }
    off += w;
  }
  return out;
}

function identityPlus(M: number, A: Float64Array, sign: number): Float64Array {
  const out = new Float64Array(2 * M * M);
  for (let e = 0; e < 2 * M * M; e++) out[e] = sign * A[e];
  for (let k = 0; k < M; k++) out[2 * (k * M + k)] += 1;
  return out;
}

/**
 * The interpolated mouth resolvent over a sorted list of real energies: which energies
 * were solved directly, and an evaluator for any energy inside the list's range.
 */
export class MouthInterpolation {
  readonly size: number;
  private readonly blocks: Block[] = [];
  /** Direct results by energy. */
  readonly direct = new Map<number, TransmissionPoint>();
  directSolves = 0;

  constructor(
    private readonly op: EffectiveHamiltonian,
    private readonly solver: MouthSolver,
    readonly energies: number[],
    options: MouthInterpolationOptions = {},
    private readonly onSolve: () => void = () => {},
  ) {
    this.size = mouthOrder(op).length;
    const tolerance = options.tolerance ?? 1e-11;
    const blockSteps = Math.max(8, options.blockSteps ?? 64);
    const step = Math.max(2, options.sampleStep ?? 4);
    const last = energies.length - 1;
    for (let lo = 0; lo < last; lo += blockSteps) {
      const hi = Math.min(last, lo + blockSteps);
      this.blocks.push(this.fitBlock(lo, hi, step, tolerance));
    }
  }

  /** Blocks that fell back to direct solves, and the largest held-out |ΔT| of the others. */
  summary(): { blocks: number; fallbackBlocks: number; worstHeldOut: number } {
    let worst = 0;
    for (const b of this.blocks) if (b.rational) worst = Math.max(worst, b.error);
    return { blocks: this.blocks.length, fallbackBlocks: this.blocks.filter((b) => !b.rational).length, worstHeldOut: worst };
  }

  private solve(index: number): { point: TransmissionPoint; g: Float64Array } {
    const E = this.energies[index];
    const { point, mouth } = this.solver.atMouth(E);
    this.directSolves++;
    this.onSolve();
    this.direct.set(E, point);
    const M = this.size;
    const sigma = mouthSelfEnergy(this.op, E, 0);
    // g = (1 + G_mouth Σ)⁻¹ G_mouth
    const g = solveDense(M, identityPlus(M, matMul(M, mouth, sigma), 1), mouth, new Float64Array(2 * M * M));
    return { point, g };
  }

  private fitBlock(lo: number, hi: number, step: number, tolerance: number): Block {
    const count = Math.floor((hi - lo) / step);
    const sampleIdx: number[] = [];
    for (let k = 0; k <= count; k++) sampleIdx.push(lo + k * step);
    if (sampleIdx[sampleIdx.length - 1] !== hi) sampleIdx.push(hi);
    // held-out energies: the grid energies halfway into the second and the second-to-last gap
    const heldIdx = new Set<number>();
    for (const k of [1, sampleIdx.length - 2]) {
      const a = sampleIdx[k];
      const b = sampleIdx[k + 1];
      if (b !== undefined && b - a >= 2) heldIdx.add(Math.floor((a + b) / 2));
    }
    if (sampleIdx.length < 5 || hi - lo < 2 * step) return this.directBlock(lo, hi);
    const samples = sampleIdx.map((i) => ({ i, ...this.solve(i) }));
    // support: even positions but the last; least squares: odd positions and the last
    const support = samples.filter((_, k) => k % 2 === 0 && k !== samples.length - 1);
    const others = samples.filter((_, k) => k % 2 === 1 || k === samples.length - 1);
    if (others.length < support.length) others.push(support.pop()!);
    const M = this.size;
    const z = (list: typeof samples) => {
      const out = new Float64Array(2 * list.length);
      list.forEach((s, k) => (out[2 * k] = this.energies[s.i]));
      return out;
    };
    let rational: BlockRational;
    try {
      rational = fitBlockRational(
        M,
        z(support),
        support.map((s) => s.g),
        z(others),
        others.map((s) => s.g),
      );
    } catch {
      return this.directBlock(lo, hi);
    }
    const block: Block = { lo, hi, rational, phaseOffset: 0, error: 0 };

    // check: the least-squares samples and the held-out energies against direct solves
    const checks = [...others.map((s) => ({ i: s.i, point: s.point })), ...[...heldIdx].map((i) => ({ i, point: this.solve(i).point }))];
    let error = 0;
    let offsetSet = false;
    for (const c of checks) {
      const E = this.energies[c.i];
      const interp = this.interpolated(block, E);
      if (!interp) {
        error = Infinity;
        break;
      }
      error = Math.max(error, largestDifference(interp.point, c.point));
      if (!offsetSet) {
        block.phaseOffset = c.point.detPhase - interp.phase;
        offsetSet = true;
      }
    }
    block.error = error;
    if (!(error <= tolerance)) return this.directBlock(lo, hi);
    return block;
  }

  private directBlock(lo: number, hi: number): Block {
    for (let i = lo; i <= hi; i++) if (!this.direct.has(this.energies[i])) this.solve(i);
    return { lo, hi, rational: null, phaseOffset: 0, error: 0 };
  }

  /** The point at E from a block's interpolant (no calibration of detPhase), or null if singular. */
  private interpolated(block: Block, E: number): { point: TransmissionPoint; phase: number } | null {
    const r = block.rational!;
    const M = this.size;
    const parts = { D: new Float64Array(2 * M * M), N: new Float64Array(2 * M * M) };
    const g = evaluateBlockRational(r, E, 0, new Float64Array(2 * M * M), parts);
    const sigma = mouthSelfEnergy(this.op, E, 0);
    // G_mouth = (1 − gΣ)⁻¹ g
    const mouth = solveDense(M, identityPlus(M, matMul(M, g, sigma), -1), g, new Float64Array(2 * M * M));
    for (const v of mouth) if (!Number.isFinite(v)) return null;
    const phase = this.phaseOf(r, E, 0, parts, sigma);
    return { point: pointFromMouth(this.op, E, mouth, phase), phase };
  }

  /** M·Σ_j arg(z − z_j) + arg det(D − NΣ) (see the file's header). */
  private phaseOf(r: BlockRational, zRe: number, zIm: number, parts: { D: Float64Array; N: Float64Array }, sigma: Float64Array): number {
    const M = this.size;
    if (Number.isNaN(parts.D[0])) return NaN;
    let phase = 0;
    for (let j = 0; j < r.weights.length; j++) phase += M * Math.atan2(zIm - r.support[2 * j + 1], zRe - r.support[2 * j]);
    const A = matMul(M, parts.N, sigma);
    for (let e = 0; e < 2 * M * M; e++) A[e] = parts.D[e] - A[e];
    const det = { value: 0 };
    solveDense(M, A, new Float64Array(2 * M * M), new Float64Array(2 * M * M), det);
    return phase + det.value;
  }

  private blockOf(E: number): Block {
    let k = 0;
    while (k + 1 < this.blocks.length && E > this.energies[this.blocks[k].hi]) k++;
    return this.blocks[k];
  }

  /** The point at any energy inside the list's range: direct if solved, else interpolated or solved now. */
  at(E: number): TransmissionPoint {
    const known = this.direct.get(E);
    if (known) return known;
    const block = this.blockOf(E);
    if (block.rational) {
      const it = this.interpolated(block, E);
      if (it && Number.isFinite(it.phase)) {
        it.point.detPhase = wrap(it.point.detPhase + block.phaseOffset);
        return it.point;
      }
    }
    const point = this.solver.at(E);
    this.directSolves++;
    this.onSolve();
    this.direct.set(E, point);
    return point;
  }

  /**
   * Change of arg det T(E + iη) from energy a to energy b (both in one block), for the
   * sweep's upper probe: from the interpolant where the block has one, else null
   * (the caller then factorises).
   */
  probeStep(a: number, b: number, eta: number): number | null {
    const block = this.blockOf(0.5 * (a + b));
    if (!block.rational) return null;
    const M = this.size;
    const phase = (E: number): number => {
      const parts = { D: new Float64Array(2 * M * M), N: new Float64Array(2 * M * M) };
      evaluateBlockRational(block.rational!, E, eta, new Float64Array(2 * M * M), parts);
      return this.phaseOf(block.rational!, E, eta, parts, mouthSelfEnergy(this.op, E, eta, E));
    };
    const d = phase(b) - phase(a);
    return Math.abs(wrap(d));
  }
}

/** Largest |Δ| over every T and R entry of two points at one energy. */
export function largestDifference(a: TransmissionPoint, b: TransmissionPoint): number {
  let d = 0;
  for (let l = 0; l < a.reflection.length; l++) {
    d = Math.max(d, Math.abs(a.reflection[l] - b.reflection[l]));
    for (let m = 0; m < a.reflection.length; m++) d = Math.max(d, Math.abs(a.transmission[l][m] - b.transmission[l][m]));
  }
  return Number.isFinite(d) ? d : Infinity;
}

function wrap(d: number): number {
  return Math.atan2(Math.sin(d), Math.cos(d));
}
