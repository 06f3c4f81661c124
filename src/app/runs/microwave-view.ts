import type { Run, Spectrum } from '../../../shared/api/runs';
import type { PlanePole } from '../core/charts/pole-plane-options';
import { significant } from '../core/format/energy-format';
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

/**
 * The pole window in frequencies: f(E_min) to f(E_max), and the largest Γ_f that is inside
 * the window at every frequency of it (Γ_f of the lower edge Γmax at the top of the window:
 * a fixed Γ in k² is a narrower Γ_f at a higher frequency).
 */
export function frequencyWindow(window: Run['window'], permittivity: number): { emin: number; emax: number; gammaMax?: number } {
  const emin = frequencyOfWavenumberSquared(window['emin'] ?? NaN, permittivity);
  const emax = frequencyOfWavenumberSquared(window['emax'] ?? NaN, permittivity);
  const gammaMax = window['gammaMax'];
  if (gammaMax == null) return { emin, emax };
  return { emin, emax, gammaMax: microwaveFigures(window['emax'] ?? NaN, gammaMax, permittivity).widthMhz / 1e3 };
}

/** The window in words: "12.500–17.000 GHz, Γ_f ≤ 12.3 MHz (k² 0.0686–0.127 mm⁻²)". */
export function frequencyWindowText(window: Run['window'], permittivity: number): string {
  const f = frequencyWindow(window, permittivity);
  const range = `${f.emin.toFixed(3)}–${f.emax.toFixed(3)} GHz`;
  const raw = `k² ${significant(window['emin'] ?? NaN)}–${significant(window['emax'] ?? NaN)} mm⁻²`;
  if (window['points'] != null) return `${range}, ${window['points']} frequencies (${raw})`;
  return f.gammaMax != null ? `${range}, Γ_f ≤ ${significant(f.gammaMax * 1e3)} MHz (${raw})` : `${range} (${raw})`;
}

/** Real k² values (thresholds, the validity limit) as frequencies (GHz). */
export function frequencies(values: readonly number[], permittivity: number): number[] {
  return values.map((v) => frequencyOfWavenumberSquared(v, permittivity));
}

/** The spectrum sampled at frequencies instead of k² (the curves are unchanged). */
export function frequencySpectrum(s: Spectrum, permittivity: number): Spectrum {
  return { ...s, energies: frequencies(s.energies, permittivity) };
}
