/**
 * Complex frequencies of the microwave mode (docs/physics-model.md, "Physics modes").
 * The lattice operator's eigenvalue is z = k² (mm⁻²) for the TM0 field of a flat
 * resonator; with the filling's relative permittivity ε_r the frequency is
 * f = c·√z/(2π√ε_r) (principal root: Re √z > 0, Im √z ≤ 0 for a pole below the axis).
 * c = 299 792 458 m/s exactly (SI definition of the metre; CODATA), i.e. 299.792458 mm/ns.
 */
import { SPEED_OF_LIGHT_M_S } from './constants';

/** c in mm per ns (= mm·GHz): f (GHz) = C_MM_PER_NS · k (1/mm) / (2π√ε_r). */
export const C_MM_PER_NS = SPEED_OF_LIGHT_M_S * 1e-6;

interface MicrowaveFigures {
  /** Re f (GHz). */
  frequencyGhz: number;
  /** Γ_f = 2|Im f| (MHz): the full width at half maximum of the power peak. */
  widthMhz: number;
  /** Energy lifetime τ = 1/(2π Γ_f) (ns); null for a bound mode (Γ_f = 0). */
  lifetimeNs: number | null;
  /** Q = Re f / Γ_f = Re√z/(2|Im√z|); null for a bound mode. */
  quality: number | null;
}

/** √z, principal branch, for z = re + i·im. */
function principalSqrt(re: number, im: number): { re: number; im: number } {
  // The half-angle form loses Im √z to cancellation when |im| ≪ re (a narrow pole): take the
  // larger part from it and the smaller from 2·Re√z·Im√z = im (Numerical Recipes §5.4).
  const m = Math.hypot(re, im);
  if (m === 0) return { re: 0, im: 0 };
  const w = Math.sqrt((m + Math.abs(re)) / 2);
  if (re >= 0) return { re: w, im: im / (2 * w) };
  return { re: Math.abs(im) / (2 * w), im: im < 0 ? -w : w };
}

/**
 * Frequency, width, lifetime and Q of a pole z = E − iΓ/2 of the k² operator (E, Γ in
 * mm⁻²). A pole with Γ = 0 (bound) has infinite τ and Q (null). Cost O(1).
 */
export function microwaveFigures(energy: number, width: number, permittivity: number): MicrowaveFigures {
  const k = principalSqrt(energy, -width / 2);
  const scale = C_MM_PER_NS / (2 * Math.PI * Math.sqrt(permittivity));
  const frequencyGhz = scale * k.re;
  const widthGhz = 2 * scale * Math.abs(k.im);
  if (!(widthGhz > 0)) return { frequencyGhz, widthMhz: 0, lifetimeNs: null, quality: null };
  return { frequencyGhz, widthMhz: widthGhz * 1e3, lifetimeNs: 1 / (2 * Math.PI * widthGhz), quality: k.re / (2 * Math.abs(k.im)) };
}

/** k² (mm⁻²) of a real frequency f (GHz): k = 2π f √ε_r / c. */
export function wavenumberSquared(frequencyGhz: number, permittivity: number): number {
  const k = (2 * Math.PI * frequencyGhz * Math.sqrt(permittivity)) / C_MM_PER_NS;
  return k * k;
}

/** The real frequency (GHz) of a real k² (mm⁻²); 0 at and below 0. */
export function frequencyOfWavenumberSquared(kSquared: number, permittivity: number): number {
  return kSquared > 0 ? (C_MM_PER_NS * Math.sqrt(kSquared)) / (2 * Math.PI * Math.sqrt(permittivity)) : 0;
}

/**
 * Pole window in k² for a frequency window: E from k²(fmin) to k²(fmax), and Γmax so that
 * every pole with Γ_f ≤ widthMaxMhz at any f ≤ fmax lies inside (Γ_z ≈ 2·k·2|Im k| grows
 * with k, so the top of the window sets it). Cost O(1).
 */
export function microwaveWindow(fminGhz: number, fmaxGhz: number, widthMaxMhz: number, permittivity: number): { emin: number; emax: number; gammaMax: number } {
  const kTop = Math.sqrt(wavenumberSquared(fmaxGhz, permittivity));
  // |Im k| = π√ε_r Γ_f / c; Im z = 2·Re k·Im k; Γ_z = −2 Im z. The exact z of (f − iΓ_f/2) is used.
  const kIm = (Math.PI * Math.sqrt(permittivity) * (widthMaxMhz * 1e-3)) / C_MM_PER_NS;
  const gammaMax = 4 * kTop * kIm;
  return { emin: wavenumberSquared(fminGhz, permittivity), emax: kTop * kTop, gammaMax };
}

/**
 * The 2D (TM0) limit c/(2h√ε_r) (GHz) of a resonator of height h (mm): above it the
 * first mode with a vertical half wave (TM1/TE1) propagates and the 2D picture fails
 * (the TE1/TM1 cut-off of a parallel-plate guide; Pozar, Microwave Engineering, 4th ed., §3.2 — section from memory).
 */
export function twoDimensionalLimitGhz(heightMm: number, permittivity: number): number {
  return C_MM_PER_NS / (2 * heightMm * Math.sqrt(permittivity));
}
