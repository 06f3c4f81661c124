import type { Spectrum } from '../../../shared/api/runs';
import type { PlanePole } from '../core/charts/pole-plane-options';
import { frequencyOfWavenumberSquared, microwaveFigures } from '../../../shared/units/microwave';

/**
 * A microwave run in its own units. The engine's eigenvalue is k² (mm⁻²); a microwave
 * engineer reads frequencies, so the run pages draw and write f = c·√k²/(2π√ε_r)
 * (shared/units/microwave.ts, the same conversion the server stores with each pole):
 * poles as Re f and Γ_f = 2|Im f| (both GHz on the charts, Γ_f in MHz in words), the
 * window's edges, the thresholds and the spectrum's sample points as frequencies.
 */

/** A pole z = E − iΓ/2 (k², mm⁻²) as the charts draw it: energy → Re f (GHz), width → Γ_f (GHz). */
export function frequencyPole<P extends PlanePole>(p: P, permittivity: number): P {
  const m = microwaveFigures(p.energy, p.width, permittivity);
  return { ...p, energy: m.frequencyGhz, width: m.widthMhz / 1e3 };
}

/** Real k² values (thresholds, the validity limit) as frequencies (GHz). */
export function frequencies(values: readonly number[], permittivity: number): number[] {
  return values.map((v) => frequencyOfWavenumberSquared(v, permittivity));
}

/** The spectrum sampled at frequencies instead of k² (the curves are unchanged). */
export function frequencySpectrum(s: Spectrum, permittivity: number): Spectrum {
  return { ...s, energies: frequencies(s.energies, permittivity) };
}
