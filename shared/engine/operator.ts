/**
 * The contract between the physics (lattice, leads, H_eff) and the numerical
 * drivers (sparse LU, transmission, pole search). All energies are in meV.
 *
 * T(z) = z·1 − H − Σ(z) on the cavity sites S, where Σ is the sum of the lead
 * self-energies on their mouth sites (../../docs/physics-model.md, "Leads").
 * The sparsity pattern of T is the same for every z, so an LU ordering and its
 * symbolic analysis are computed once and reused for every energy.
 */

/** A complex number at the edges of the engine (kernels use interleaved Float64Array). */
export interface Complex {
  re: number;
  im: number;
}

/**
 * Which continuation of each lead channel's λ_m(z) is used: sheet[lead][m-1] is
 * true for an open channel (outgoing root continued into the lower half plane),
 * false for a closed one (evanescent root, |λ| < 1). Fixed flags make Σ(z)
 * analytic on the whole vertical strip between two neighbouring thresholds.
 */
export type SheetFlags = boolean[][];

/** A nonlinear eigenvalue problem T(z)ψ = 0 with a fixed CSC sparsity pattern. */
export interface NonlinearOperator {
  /** Number of unknowns (cavity sites). */
  readonly n: number;
  /** CSC column pointers of T (length n+1); row indices sorted within each column. */
  readonly colPtr: Int32Array;
  /** CSC row indices of T. The pattern is structurally symmetric. */
  readonly rowIdx: Int32Array;
  /** Lattice column i and row j of each unknown, for geometric orderings and mode images. */
  readonly sites: { i: Int32Array; j: Int32Array };
  /** Sorted real energies (meV) at which a channel opens or closes: ε_m ± 2t of every lead. */
  readonly thresholds: readonly number[];
  /** Number of leads. */
  readonly leadCount: number;
  /** The hopping energy t (meV), the natural scale for tolerances. */
  readonly hopping: number;
  /** Sheet flags of the threshold interval that contains the real energy reE. */
  sheetAt(reE: number): SheetFlags;
  /** Writes the values of T(z) in CSC order (interleaved re, im; length 2·nnz) into out. */
  assemble(z: Complex, sheet: SheetFlags, out: Float64Array): void;
  /** Writes the values of dT/dz = 1 − dΣ/dz in the same CSC order into out. */
  assembleDerivative(z: Complex, sheet: SheetFlags, out: Float64Array): void;
  /**
   * ψ† Γ_ℓ(z) ψ with Γ_ℓ(z) = i(Σ_ℓ(z) − Σ_ℓ(z)†), for a vector ψ over the n
   * unknowns (interleaved). Real by construction (meV · |ψ|²).
   */
  leadWidthForm(z: Complex, sheet: SheetFlags, lead: number, psi: Float64Array): number;
}

/** Progress and cancellation for long computations (workers show it as a progress bar). */
export interface WorkControl {
  /** Called with a short stage name and a fraction in [0, 1] of the whole job. */
  onProgress?: (stage: string, fraction: number) => void;
  /** When aborted, the computation throws a WorkCancelled error at its next check. */
  signal?: AbortSignal;
}

export class WorkCancelled extends Error {
  constructor() {
    super('The computation was cancelled.');
    this.name = 'WorkCancelled';
  }
}

/** Throws WorkCancelled when the control's signal has been aborted. */
export function checkCancelled(control: WorkControl | undefined): void {
  if (control?.signal?.aborted) throw new WorkCancelled();
}
