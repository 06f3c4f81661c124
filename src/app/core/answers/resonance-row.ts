// Answer types that more than one feature reads, kept here so that features do not
// import each other; they move to the HTTP contract (shared/api) with the other answers.

/** One catalogued resonance z = E − iΓ/2 (energies meV, lifetime ps), as the API lists it. */
export interface ResonanceRow {
  id: string;
  /** null for a fitted resonance of a measured trace. */
  runId: string | null;
  /** 'fitted': a peak fit (fitId), not a computed pole. */
  source: 'computed' | 'fitted';
  fitId: string | null;
  modelId: string;
  modelName: string;
  modelVersion: number;
  family: string;
  keyDimensions: Record<string, number>;
  material: string;
  fieldT: number;
  energy: number;
  width: number;
  /** null for a bound state (Γ = 0): the lifetime is infinite. */
  lifetimePs: number | null;
  /** null for a bound state: Q is infinite. */
  quality: number | null;
  partialWidths: { lead: string; width: number }[];
  /** null for fitted resonances. */
  petermann: number | null;
  residual: number | null;
  bound: boolean;
  nearThreshold: boolean;
  /** Another pole closer than the mean of the two widths, or K > 1.2: a Breit–Wigner fit is not meaningful. */
  overlapping: boolean;
  tags: string[];
  notes: string;
  createdAt: string;
  /** electrons (E, Γ in meV) or microwave (E, Γ are k² in mm⁻²; frequencies in `microwave`). */
  physics?: 'electrons' | 'microwave';
  microwave?: { frequencyGhz: number; widthMhz: number; lifetimeNs: number | null; quality: number | null; validityLimitGhz: number | null } | null;
  /** Lattice validity stored with the resonance: the trusted limit, λ/a here, and whether it lies above the limit. */
  validity?: { limit: number | null; wavelengthSpacings: number | null; aboveLimit: boolean | null };
  /** null for fitted resonances (no mode image). */
  thumbnailUrl: string | null;
  imageUrl: string | null;
}
