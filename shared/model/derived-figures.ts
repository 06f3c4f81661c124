/**
 * Figures the editor and the run launcher show for a model: site count, hopping,
 * every channel threshold, field scales, and how far the lattice can be trusted
 * at a chosen energy (docs/physics-model.md, "Choices made in Poleward").
 */
import { cyclotronEnergy, FLUX_QUANTUM_T_NM2, HBAR_MEV_PS, fluxPerPlaquette, magneticLength } from '../units/constants';
import { twoDimensionalLimitGhz } from '../units/microwave';
import { modelHopping, modelLattice, modelMassRatio, type CavityModel } from './cavity-model';
import type { PhysicsKind } from './physics-mode';

/** Recommended ceiling of the kinetic energy, as a fraction of t (dispersion error about 4 %). */
export const ENERGY_CEILING_OVER_T = 0.5;
/** Warn when the wavelength is shorter than this many lattice spacings. */
export const MIN_WAVELENGTH_OVER_SPACING = 10;

/**
 * Where channel m of a lead is open: opens < E < closes. A closed-form lead lists each channel
 * once; a numerical lead (honeycomb, or a field in the leads) numbers its open channels
 * 1..N(E) at each energy and may list a channel on several ranges (shared/engine/lead-channel-ranges.ts).
 */
export interface ChannelThreshold {
  /** Channel m (1-based). */
  channel: number;
  /** Transverse energy ε_m (meV); for a numerical lead the middle of the range. */
  transverse: number;
  /** Channel opens at ε_m − 2t (meV); for a numerical lead at a band edge. */
  opens: number;
  /** Channel closes at ε_m + 2t (meV); for a numerical lead at a band edge. */
  closes: number;
}

export interface EnergyValidity {
  energy: number;
  /** (E_lattice − E_parabola)/E_parabola at the same wavevector; negative: the lattice band is flatter. */
  dispersionError: number;
  /** Wavelength 2π/k (nm), k from the lattice dispersion E = 2t(1 − cos ka). Infinity at E ≤ 0. */
  wavelength: number;
  wavelengthOverSpacing: number;
  warnings: string[];
}

export interface DerivedFigures {
  siteCount: number;
  /** t (meV). */
  hopping: number;
  massRatio: number;
  /** Recommended largest kinetic energy E (meV), ENERGY_CEILING_OVER_T·t. */
  energyCeiling: number;
  /** Energy (meV) at which the wavelength equals MIN_WAVELENGTH_OVER_SPACING·a. */
  wavelengthCeiling: number;
  fluxPerPlaquette: number;
  /** ħω_c (meV), 0 at B = 0. */
  cyclotronEnergy: number;
  /** ℓ_B (nm), Infinity at B = 0. */
  magneticLength: number;
  leads: { name: string; side: string; width: number; offset: number; thresholds: ChannelThreshold[] }[];
  validity?: EnergyValidity;
  /** Which physics the lattice describes; in the microwave mode every energy above is k² (mm⁻²), every length mm. */
  physics?: PhysicsKind;
  /** The lattice: square (default) or honeycomb. */
  lattice?: 'square' | 'honeycomb';
  /** Honeycomb: ħv_F = 3t·a_CC/2 (meV·nm), v_F (m/s) and the Dirac-point energy 3t' (meV). */
  dirac?: { hbarVelocity: number; velocity: number; energy: number };
  /** Microwave mode: ε_r of the filling, the height h (mm) and the 2D limit c/(2h√ε_r) (GHz). */
  permittivity?: number;
  heightMm?: number;
  twoDimensionalLimitGhz?: number;
}

/**
 * Relative error of the lattice dispersion E = 2t(1 − cos ka) against the
 * parabola t(ka)² at the wavevector where the lattice energy is E. Small E:
 * ≈ −E/(12t). Returns NaN above the band top 4t. Cost O(1).
 */
export function dispersionError(energy: number, hopping: number): number {
  if (energy <= 0) return 0;
  const c = 1 - energy / (2 * hopping);
  if (c < -1) return NaN;
  const ka = Math.acos(c);
  const parabola = hopping * ka * ka;
  return (energy - parabola) / parabola;
}

/** Lattice wavelength 2π/k (nm) at kinetic energy E on a 1D lattice of spacing a. */
function latticeWavelength(energy: number, hopping: number, spacing: number): number {
  if (energy <= 0) return Infinity;
  const c = 1 - energy / (2 * hopping);
  if (c < -1) return NaN;
  return (2 * Math.PI * spacing) / Math.acos(c);
}

/**
 * Validity of the lattice at energy E measured from the band bottom (minus the lead offsets):
 * meV and nm for electrons, k² (mm⁻²) and mm in the microwave mode, where the same rule
 * reads "at least 10 lattice spacings per wavelength".
 */
export function energyValidity(energy: number, hopping: number, spacing: number, physics: PhysicsKind = 'electrons'): EnergyValidity {
  const err = dispersionError(energy, hopping);
  const wl = latticeWavelength(energy, hopping, spacing);
  const warnings: string[] = [];
  const [eUnit, lUnit, eName] = physics === 'microwave' ? ['mm⁻²', 'mm', 'k²'] : ['meV', 'nm', 'E'];
  if (energy > ENERGY_CEILING_OVER_T * hopping) {
    warnings.push(
      Number.isFinite(err)
        ? `${eName} = ${energy.toPrecision(4)} ${eUnit} is above t/2 = ${(hopping / 2).toPrecision(4)} ${eUnit}: the lattice dispersion is off the parabola by ${(100 * Math.abs(err)).toFixed(1)} %`
        : `${eName} = ${energy.toPrecision(4)} ${eUnit} is above the top of the lattice band 4t = ${(4 * hopping).toPrecision(4)} ${eUnit}: the lattice has no propagating states there`,
    );
  }
  if (wl / spacing < MIN_WAVELENGTH_OVER_SPACING) {
    warnings.push(
      `the wavelength ${wl.toPrecision(3)} ${lUnit} is shorter than ${MIN_WAVELENGTH_OVER_SPACING} lattice spacings (${(MIN_WAVELENGTH_OVER_SPACING * spacing).toPrecision(3)} ${lUnit}): refine the grid`,
    );
  }
  return { energy, dispersionError: err, wavelength: wl, wavelengthOverSpacing: wl / spacing, warnings };
}

/** Warn when |E − E_D| exceeds this fraction of t: the Dirac cone is visibly warped there. */
const DIRAC_CEILING_OVER_T = 0.25;

/**
 * Validity of the Dirac (continuum) picture on the honeycomb at energy E: the relative error of
 * ħv_F·q against the lattice band t|f(K − q)| along the line from K to Γ (one of the directions
 * of trigonal warping; Castro Neto et al., Rev. Mod. Phys. 81, 109 (2009), §II.A, from memory), and the wavelength 2πħv_F/|E − E_D|. The tight-binding results
 * themselves need no such limit: this is about reading them with the continuum formulas.
 */
function diracValidity(energy: number, hopping: number, acc: number, diracEnergy: number): EnergyValidity {
  const e = Math.abs(energy - diracEnergy);
  const hv = 1.5 * hopping * acc;
  // On the k_x axis f = 1 + 2cos(√3·k_x·a_CC/2), zero at K = 4π/(3√3·a_CC), 3 at Γ; bisection on q.
  const band = (q: number) => hopping * Math.abs(1 + 2 * Math.cos(((4 * Math.PI) / (3 * Math.sqrt(3) * acc) - q) * (Math.sqrt(3) / 2) * acc));
  let lo = 0;
  let hi = (4 * Math.PI) / (3 * Math.sqrt(3) * acc);
  const top = band(hi);
  let err = NaN;
  if (e === 0) err = 0;
  else if (e < top) {
    for (let k = 0; k < 80; k++) {
      const mid = 0.5 * (lo + hi);
      if (band(mid) < e) lo = mid;
      else hi = mid;
    }
    const q = 0.5 * (lo + hi);
    err = (e - hv * q) / (hv * q);
  }
  const wl = e === 0 ? Infinity : (2 * Math.PI * hv) / e;
  const warnings: string[] = [];
  if (e > DIRAC_CEILING_OVER_T * hopping) {
    warnings.push(
      `|E − E_D| = ${e.toPrecision(4)} meV is above t/4 = ${(hopping / 4).toPrecision(4)} meV: the Dirac cone is warped (${Number.isFinite(err) ? (100 * Math.abs(err)).toFixed(1) + ' %' : 'beyond the band'}), so continuum figures (v_F, Landau levels ∝ √B) do not apply; the tight-binding results stand`,
    );
  }
  return { energy, dispersionError: err, wavelength: wl, wavelengthOverSpacing: wl / acc, warnings };
}

/**
 * Derived figures of a parsed model; `energy` (meV) adds the validity block. Cost O(Σ W).
 * `numerical` holds the channel ranges of numerical leads (honeycomb, or a field in the leads),
 * one list per lead, which only the engine can compute: shared/engine/lead-channel-ranges.ts
 * `deriveFiguresWithLeads` fills it (the server and the CLI use that); without it such leads list none.
 */
export function deriveFigures(model: CavityModel, siteCount: number, energy?: number, numerical?: ChannelThreshold[][]): DerivedFigures {
  const lattice = modelLattice(model);
  if (lattice.kind === 'honeycomb') {
    const t = modelHopping(model);
    const acc = model.spacing;
    const hbarVelocity = 1.5 * t * acc;
    const diracEnergy = 3000 * lattice.nextHopping;
    const lB = magneticLength(model.field);
    return {
      siteCount,
      hopping: t,
      massRatio: 1,
      energyCeiling: DIRAC_CEILING_OVER_T * t,
      wavelengthCeiling: DIRAC_CEILING_OVER_T * t,
      // Flux through one hexagon, (3√3/2)a_CC², in flux quanta.
      fluxPerPlaquette: (model.field * 1.5 * Math.sqrt(3) * acc * acc) / FLUX_QUANTUM_T_NM2,
      // The first graphene Landau level √2·ħv_F/ℓ_B (E_n = sgn(n)√(2eħv_F²B|n|)).
      cyclotronEnergy: model.field === 0 ? 0 : (Math.SQRT2 * hbarVelocity) / lB,
      magneticLength: lB,
      // Leads on the honeycomb are numerical: their channels open and close at the band edges.
      leads: model.leads.map((lead, k) => ({
        name: lead.name ?? `${lead.side}${k}`,
        side: lead.side,
        width: lead.width,
        offset: lead.offset,
        thresholds: numerical?.[k] ?? [],
      })),
      validity: energy === undefined ? undefined : diracValidity(energy, t, acc, diracEnergy),
      physics: model.physics.kind,
      lattice: 'honeycomb',
      // ħ in meV·ps and lengths in nm: v = ħv/ħ in nm/ps = 1000 m/s.
      dirac: { hbarVelocity, velocity: (hbarVelocity / HBAR_MEV_PS) * 1000, energy: diracEnergy },
    };
  }
  const massRatio = modelMassRatio(model);
  const t = modelHopping(model);
  const leads = model.leads.map((lead, k) => {
    // A field in the leads: Landau bands, found numerically.
    if (model.fieldInLeads === true && model.field !== 0)
      return { name: lead.name ?? `${lead.side}${k}`, side: lead.side, width: lead.width, offset: lead.offset, thresholds: numerical?.[k] ?? [] };
    const thresholds: ChannelThreshold[] = [];
    for (let m = 1; m <= lead.width; m++) {
      const eps = lead.offset + 4 * t - 2 * t * Math.cos((m * Math.PI) / (lead.width + 1));
      thresholds.push({ channel: m, transverse: eps, opens: eps - 2 * t, closes: eps + 2 * t });
    }
    return { name: lead.name ?? `${lead.side}${k}`, side: lead.side, width: lead.width, offset: lead.offset, thresholds };
  });
  // λ = 10a ⇔ ka = 2π/10 ⇔ E = 2t(1 − cos(π/5)).
  const wavelengthCeiling = 2 * t * (1 - Math.cos((2 * Math.PI) / MIN_WAVELENGTH_OVER_SPACING));
  return {
    siteCount,
    hopping: t,
    massRatio,
    energyCeiling: ENERGY_CEILING_OVER_T * t,
    wavelengthCeiling,
    fluxPerPlaquette: fluxPerPlaquette(model.field, model.spacing),
    cyclotronEnergy: cyclotronEnergy(model.field, massRatio),
    magneticLength: magneticLength(model.field),
    leads,
    validity: energy === undefined ? undefined : energyValidity(energy, t, model.spacing, model.physics.kind),
    physics: model.physics.kind,
    ...(model.physics.kind === 'microwave'
      ? {
          permittivity: model.physics.permittivity,
          heightMm: model.physics.height,
          twoDimensionalLimitGhz: twoDimensionalLimitGhz(model.physics.height, model.physics.permittivity),
        }
      : {}),
  };
}
