/**
 * Resonance lineshapes for peak fits (energies in meV, x the energy or the Fermi level μ).
 *
 * With ε = 2(x − E0)/Γ:
 * - Breit–Wigner (Lorentzian) peak of height A: A / (1 + ε²). Its full width at half
 *   maximum is Γ, the width of the pole z = E0 − iΓ/2 (Breit & Wigner, Phys. Rev. 49 (1936) 519).
 * - Fano peak: A·(q + ε)² / ((1 + q²)(1 + ε²)) (Fano, Phys. Rev. 124 (1961) 1866, eq. 21,
 *   divided by 1 + q² so that its maximum is A). As |q| → ∞ it tends to the Breit–Wigner
 *   peak A/(1 + ε²); q = 0 is a symmetric dip A·ε²/(1 + ε²) from the level A down to zero.
 *   Writing (q + ε)²/(1 + ε²) = 1 + (q² − 1)·L + 2q·D with L = 1/(1 + ε²) and
 *   D = ε/(1 + ε²) lets both be thermally broadened through L and D alone.
 * - Thermal broadening: conductance at temperature T is the zero-temperature lineshape
 *   averaged over −∂f/∂E at the Fermi level μ = x (the Landauer formula at finite
 *   temperature; Datta, Electronic Transport in Mesoscopic Systems, 1995, ch. 2, from
 *   memory). For L and D this average has a closed form:
 *   with s = 2πkT and w = 1/2 + (Γ/2 + i(μ − E0))/s,
 *     ⟨L⟩ = (Γ/2s)·Re ψ′(w),  ⟨D⟩ = −(Γ/2s)·Im ψ′(w)
 *   (ψ′ the trigamma function): summing the residues of −∂f/∂E at the Matsubara
 *   energies μ − iπkT(2n + 1) gives ⟨1/(E − E0 − iΓ/2)⟩ = (i/s)·ψ′(w). As kT → 0,
 *   ψ′(w) → 1/w and L, D come back; for kT ≫ Γ the peak becomes (πΓ/2)·(−∂f/∂E), whose
 *   FWHM is 2·ln(3 + 2√2)·kT ≈ 3.5255·kT. Tested against direct quadrature of the
 *   convolution (tests/engine/fit-lineshapes.test.ts).
 * Cost: O(1) per point (thermal: one trigamma, at most 12 complex divisions).
 */
import { trigamma } from './fit-trigamma.js';

/** Boltzmann constant in meV per mK (CODATA 2018: k_B = 8.617333262e-5 eV/K). */
export const BOLTZMANN_MEV_PER_MK = 8.617333262e-5;

/** FWHM of −∂f/∂E in units of kT: 2·ln(3 + 2√2) (solve cosh²(x/2kT) = 2). */
export const THERMAL_FWHM_PER_KT = 2 * Math.log(3 + 2 * Math.SQRT2);

export type Lineshape = 'bw' | 'fano' | 'thermal' | 'thermal-fano';
export const LINESHAPES: readonly Lineshape[] = ['bw', 'fano', 'thermal', 'thermal-fano'];

export function hasAsymmetry(shape: Lineshape): boolean {
  return shape === 'fano' || shape === 'thermal-fano';
}

export function isThermal(shape: Lineshape): boolean {
  return shape === 'thermal' || shape === 'thermal-fano';
}

const scratch = new Float64Array(2);

/**
 * L = 1/(1 + ε²) and D = ε/(1 + ε²) at x, thermally averaged when kT > 0
 * (kT in meV; kT = 0 gives the bare values). Writes out[0] = L, out[1] = D.
 */
export function lorentzianPair(x: number, e0: number, gamma: number, kT: number, out: Float64Array): void {
  const half = gamma / 2;
  const dx = x - e0;
  // Below kT/Γ ≈ 1e-4 of the width the thermal average differs from the bare shape by
  // under (πkT/Γ)²/3 ≈ 1e-8 relative; the asymptotic trigamma there loses digits.
  if (kT <= 0 || kT < 1e-4 * gamma) {
    const d = dx * dx + half * half;
    out[0] = (half * half) / d;
    out[1] = (half * dx) / d;
    return;
  }
  const s = 2 * Math.PI * kT;
  trigamma(0.5 + half / s, dx / s, scratch);
  out[0] = (half / s) * scratch[0];
  out[1] = -(half / s) * scratch[1];
}

const pair = new Float64Array(2);

/** One peak of the given lineshape at x: height A, asymmetry q (ignored unless Fano), kT in meV. */
export function peakValue(shape: Lineshape, x: number, e0: number, gamma: number, amplitude: number, q: number, kT: number): number {
  lorentzianPair(x, e0, gamma, isThermal(shape) ? kT : 0, pair);
  if (!hasAsymmetry(shape)) return amplitude * pair[0];
  return (amplitude / (1 + q * q)) * (1 + (q * q - 1) * pair[0] + 2 * q * pair[1]);
}

/** −∂f/∂E at E − μ = x for kT in meV: 1/(4kT·cosh²(x/2kT)). */
export function fermiDerivative(x: number, kT: number): number {
  const c = Math.cosh(x / (2 * kT));
  return 1 / (4 * kT * c * c);
}
