/**
 * Result and option types of the certified pole search (poles.ts). Energies in
 * meV, times in ps; see docs/physics-model.md, "Observables" and "How the pole
 * search works".
 */
import type { WorkControl } from './operator';

/**
 * The search window in the complex energy plane: [emin, emax] × [−gammaMax/2, 0],
 * i.e. every pole z = E − iΓ/2 with emin ≤ E ≤ emax and 0 ≤ Γ ≤ gammaMax (meV).
 */
export interface PoleWindow {
  emin: number;
  emax: number;
  gammaMax: number;
}

/**
 * The linear algebra the search needs at one energy: an LU of T(z) that solves
 * with T and Tᵀ and gives log det T. SparseLuFactors (sparse-lu.ts) has this shape.
 */
export interface PoleFactors {
  /** Solves T X = B (B column-major n×nrhs, interleaved); in place in b unless out is given. */
  solve(b: Float64Array, nrhs?: number, out?: Float64Array): Float64Array;
  /** Solves Tᵀ X = B (plain transpose), in place unless out is given. */
  solveTranspose(b: Float64Array, nrhs?: number, out?: Float64Array): Float64Array;
  logDet(): { logAbs: number; arg: number };
}

/** An analysed factorisation plan for T's fixed pattern; SparseLuPlan has this shape. */
export interface PoleFactorPlan {
  factor(values: Float64Array): PoleFactors;
}

export interface PoleSearchOptions extends WorkControl {
  /** Random probe vectors of the contour integral (block width ℓ ≥ the largest degeneracy); default 4. */
  probes?: number;
  /** Seed of the probe vectors, so a search is reproducible; default 1. */
  seed?: number;
  /** Budget of contour nodes (one LU each) over the whole window; default 4000. */
  maxNodes?: number;
  /** Relative residual ‖T(z)ψ‖/(‖T(z)‖₁‖ψ‖) at which Newton stops; default 1e-12. */
  tolerance?: number;
  /**
   * An analysed plan for op's pattern to reuse (e.g. one shared with a transmission
   * sweep); by default the search analyses a SparseLuPlan once itself.
   */
  plan?: PoleFactorPlan;
}

/** One resonance (or bound state) z = E − iΓ/2 and what is derived from it. */
export interface Pole {
  /** E = Re z (meV), measured from the band bottom. */
  energy: number;
  /** Γ = −2 Im z (meV); 0 for a bound state. */
  width: number;
  /** τ = ħ/Γ (ps); null when bound. */
  lifetimePs: number | null;
  /** Q = E/Γ; null when bound. */
  quality: number | null;
  /** Γ_ℓ = ψ_R†Γ_ℓ(z)ψ_R/ψ_R†ψ_R per lead (meV); they sum to Γ. */
  partialWidths: number[];
  /** K = (ψ_L†ψ_L)(ψ_R†ψ_R)/|ψ_Lᵀψ_R|² (≥ 1; ≈ 1 for an isolated resonance). */
  petermann: number;
  /** ‖T(z)ψ‖₂/(‖T(z)‖₁‖ψ‖₂) of the returned mode at the returned z. */
  residual: number;
  /** True when |Im z| is zero to rounding (bound state or bound state in the continuum). */
  bound: boolean;
  /** Set when |E − threshold| < 3Γ for the nearest channel threshold. */
  nearThreshold: { threshold: number; distanceInWidths: number } | null;
  /** Sheet flags (per lead, per channel: open) the pole was found on. */
  sheet: boolean[][];
  /** Index into certificate.pieces of the piece whose contour encloses the pole. */
  piece: number;
  /** ψ_R on the sites (interleaved re, im), Σ|ψ|² = 1, largest site real positive. */
  mode: Float64Array;
}

/** The argument-principle check of one piece of the window. */
export interface CertificatePiece {
  /** Real extent of the piece's contour (meV); pieces meet at the channel thresholds, leaving no gap. */
  emin: number;
  emax: number;
  /** Poles found inside the piece's contour. */
  polesFound: number;
  /** Winding number of det T(z) around the contour; null when it could not be settled. */
  windingNumber: number | null;
  /** True when windingNumber is settled and equals polesFound. */
  certified: boolean;
  /** Contour nodes (LU factorisations) spent on this piece. */
  nodes: number;
  note?: string;
}

export interface PoleSearchResult {
  poles: Pole[];
  certificate: { pieces: CertificatePiece[]; certified: boolean; summary: string };
  stats: {
    factorisations: number;
    seconds: number;
    /** LUs at contour nodes, including nodes of panels later bisected. */
    contourFactorisations?: number;
    /** LUs spent by Newton refinement. */
    refineFactorisations?: number;
  };
}
