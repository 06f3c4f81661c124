/**
 * The lattice-validity figures stored with every resonance (docs/physics-model.md,
 * "Validity of a resonance"), and the microwave figures of a pole: computed once, when
 * a run's results are written, so result pages, the catalogue and exports all show the
 * same mark, whoever launched the run.
 */
import { cavityModelSchema, modelHopping, modelLattice, type CavityModel } from './cavity-model';
import { DIRAC_CEILING_OVER_T, ENERGY_CEILING_OVER_T, MIN_WAVELENGTH_OVER_SPACING } from './derived-figures';
import type { PhysicsKind } from './physics-mode';
import { microwaveFigures } from '../units/microwave';
import { HBAR_MEV_PS } from '../units/constants';

/** What of a model the per-resonance figures need. */
export interface ResonancePhysics {
  physics: PhysicsKind;
  /** t (meV, or mm⁻² in the microwave mode). */
  hopping: number;
  /** min(0, lowest lead offset): the band bottom of the lowest-lying region. */
  lowestOffset: number;
  /** ε_r of a microwave filling; 1 for electrons (unused). */
  permittivity: number;
  /** Honeycomb lattice: the Dirac-point energy 3t′ (meV); absent on the square lattice. */
  diracEnergy?: number;
}

interface ResonanceValidity {
  /** Energy below which the lattice is trusted (model's energy unit). */
  limit: number;
  /** λ/a at the resonance's largest local kinetic energy; null when infinite (at or below the band bottom). */
  wavelengthSpacings: number | null;
  aboveLimit: boolean;
}

export function resonancePhysicsOf(model: CavityModel): ResonancePhysics {
  const lattice = modelLattice(model);
  return {
    physics: model.physics.kind,
    hopping: modelHopping(model),
    lowestOffset: Math.min(0, ...model.leads.map((l) => l.offset)),
    permittivity: model.physics.kind === 'microwave' ? model.physics.permittivity : 1,
    ...(lattice.kind === 'honeycomb' ? { diracEnergy: 3000 * lattice.nextHopping } : {}),
  };
}

/**
 * The same from a stored document. When it no longer parses (a document kept from an older
 * schema), the stored columns stand in: `fallback` gives the physics and t, the leads'
 * offsets are read where present.
 */
export function resonancePhysicsOfDocument(document: unknown, fallback?: { physics: PhysicsKind; hopping: number }): ResonancePhysics {
  const parsed = cavityModelSchema.safeParse(document);
  if (parsed.success) return resonancePhysicsOf(parsed.data);
  if (!fallback) throw parsed.error;
  const leads = (document as { leads?: unknown } | null)?.leads;
  const offsets = Array.isArray(leads) ? leads.map((l) => Number((l as { offset?: unknown })?.offset ?? 0)).filter(Number.isFinite) : [];
  const micro = (document as { physics?: { kind?: string; permittivity?: number } } | null)?.physics;
  return {
    physics: fallback.physics,
    hopping: fallback.hopping,
    lowestOffset: Math.min(0, ...offsets),
    permittivity: micro?.kind === 'microwave' && typeof micro.permittivity === 'number' ? micro.permittivity : 1,
  };
}

/**
 * The trusted energy: the lower of t/2 (dispersion 4 % off the parabola) and the energy
 * where the wavelength is 10 lattice spacings, 2t(1 − cos(2π/10)) ≈ 0.382 t, above the
 * lowest band bottom (the launcher's rule). The same in k² for the microwave mode.
 */
export function validityLimit(hopping: number, lowestOffset: number): number {
  const wavelengthCeiling = 2 * hopping * (1 - Math.cos((2 * Math.PI) / MIN_WAVELENGTH_OVER_SPACING));
  return Math.min(ENERGY_CEILING_OVER_T * hopping, wavelengthCeiling) + lowestOffset;
}

/** λ/a = 2π/(k a) with cos(k a) = 1 − E_kin/(2t), the largest E_kin = E − lowestOffset; 2 above the 1D band top. */
function wavelengthSpacings(energy: number, p: Pick<ResonancePhysics, 'hopping' | 'lowestOffset'>): number | null {
  const kinetic = energy - p.lowestOffset;
  if (kinetic <= 0) return null;
  const c = 1 - kinetic / (2 * p.hopping);
  return c <= -1 ? 2 : (2 * Math.PI) / Math.acos(c);
}

/**
 * On the honeycomb the continuum (Dirac) picture is what needs care, not the lattice: the limit is
 * E_D + t/4 (derived-figures.ts, the Dirac-cone warning; the same distance below E_D counts as
 * above it), λ/a_CC = 2πħv_F/(|E − E_D|·a_CC) = 3πt/|E − E_D| (ħv_F = 3t·a_CC/2), null at E_D.
 */
function diracValidity(energy: number, hopping: number, diracEnergy: number): ResonanceValidity {
  const distance = Math.abs(energy - diracEnergy);
  return {
    limit: diracEnergy + DIRAC_CEILING_OVER_T * hopping,
    wavelengthSpacings: distance === 0 ? null : (3 * Math.PI * hopping) / distance,
    aboveLimit: distance > DIRAC_CEILING_OVER_T * hopping,
  };
}

export function resonanceValidity(energy: number, p: ResonancePhysics): ResonanceValidity {
  if (p.diracEnergy !== undefined) return diracValidity(energy, p.hopping, p.diracEnergy);
  const limit = validityLimit(p.hopping, p.lowestOffset);
  return { limit, wavelengthSpacings: wavelengthSpacings(energy, p), aboveLimit: energy > limit };
}

/** Figures a catalogued resonance stores beside E and Γ. */
interface ResonanceFigures {
  validity: ResonanceValidity;
  physics: PhysicsKind;
  /** Re f (GHz) in the microwave mode, else null. */
  frequencyGhz: number | null;
  /** τ (ps): ħ/Γ for electrons, 1/(2πΓ_f) for microwaves; null when bound. */
  lifetimePs: number | null;
  /** Q: E/Γ for electrons, Re f/Γ_f = Re√z/(2|Im√z|) for microwaves; null when bound. */
  quality: number | null;
}

/** The stored figures of a resonance z = E − iΓ/2 of a model (Γ = 0: bound). Cost O(1). */
export function resonanceFigures(energy: number, width: number, p: ResonancePhysics): ResonanceFigures {
  const validity = resonanceValidity(energy, p);
  if (p.physics === 'microwave') {
    const f = microwaveFigures(energy, width, p.permittivity);
    return { validity, physics: p.physics, frequencyGhz: f.frequencyGhz, lifetimePs: f.lifetimeNs === null ? null : f.lifetimeNs * 1e3, quality: f.quality };
  }
  return {
    validity,
    physics: p.physics,
    frequencyGhz: null,
    lifetimePs: width > 0 ? HBAR_MEV_PS / width : null,
    quality: width > 0 ? energy / width : null,
  };
}
