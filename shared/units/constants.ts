/**
 * Physical constants of the physics contract (docs/physics-model.md, "Units and
 * constants"), CODATA 2018 as published by NIST, in the product's units:
 * lengths nm, energies meV, fields T, times ps.
 */

/** Reduced Planck constant ħ in meV·ps (CODATA 2018: 6.582119569e-16 eV·s). */
export const HBAR_MEV_PS = 0.6582119569;

/** ħ²/(2 m_e) in meV·nm² (CODATA 2018 ħ, m_e; the contract rounds to 7 digits). */
const HBAR2_OVER_2ME_MEV_NM2 = 38.09982;

/** Flux quantum h/e in T·nm² (CODATA 2018: 4.135667696e-15 Wb). */
export const FLUX_QUANTUM_T_NM2 = 4135.667696;

/** Speed of light c in m/s (exact by definition of the metre). */
export const SPEED_OF_LIGHT_M_S = 299_792_458;

/**
 * ħe/m_e in meV per tesla: the free-electron cyclotron energy per unit field.
 * Derived from the contract's own constants so the engine stays self-consistent:
 * ħe/m_e = 2·(ħ²/2m_e)·2π / (h/e) because ħ/e = (h/e)/(2π).
 * Value ≈ 0.1157676 meV/T (CODATA 2018 gives 2 μ_B = 0.115767636 meV/T).
 */
const CYCLOTRON_MEV_PER_T_FREE = (2 * HBAR2_OVER_2ME_MEV_NM2 * 2 * Math.PI) / FLUX_QUANTUM_T_NM2;

/**
 * Hopping energy t = (ħ²/2m_e)/(m* / m_e)/a² in meV of the effective-mass finite
 * difference Laplacian (contract, "Lattice and cavity"). Cost O(1).
 * @param spacingNm lattice spacing a in nm (> 0)
 * @param massRatio m* / m_e (> 0)
 */
export function hoppingEnergy(spacingNm: number, massRatio: number): number {
  return HBAR2_OVER_2ME_MEV_NM2 / massRatio / (spacingNm * spacingNm);
}

/** Flux per plaquette φ = B a²/(h/e) (dimensionless) for B in T and a in nm. */
export function fluxPerPlaquette(fieldT: number, spacingNm: number): number {
  return (fieldT * spacingNm * spacingNm) / FLUX_QUANTUM_T_NM2;
}

/** Cyclotron energy ħω_c = ħeB/m* in meV (Ashcroft & Mermin ch. 14; constants CODATA 2018). */
export function cyclotronEnergy(fieldT: number, massRatio: number): number {
  return (CYCLOTRON_MEV_PER_T_FREE * Math.abs(fieldT)) / massRatio;
}

/** Magnetic length ℓ_B = sqrt(ħ/(eB)) = sqrt((h/e)/(2π|B|)) in nm; Infinity at B = 0. */
export function magneticLength(fieldT: number): number {
  return fieldT === 0 ? Infinity : Math.sqrt(FLUX_QUANTUM_T_NM2 / (2 * Math.PI * Math.abs(fieldT)));
}

/** Lifetime τ = ħ/Γ in ps for a width Γ in meV; Infinity for Γ = 0 (a bound state). */
export function lifetimeFromWidth(widthMeV: number): number {
  return widthMeV > 0 ? HBAR_MEV_PS / widthMeV : Infinity;
}
