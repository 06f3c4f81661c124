import type { Run } from '../../../../shared/api/runs';
import { frequencyOfWavenumberSquared, microwaveFigures } from '../../../../shared/units/microwave';
import { significant } from './energy-format';

/** A run's window as the charts draw it: E range and, for a pole search, the width bound; null without a range. */
export function searchedWindow(window: Run['window'] | null): { emin: number; emax: number; gammaMax?: number } | null {
  const emin = window?.['emin'];
  const emax = window?.['emax'];
  if (emin === undefined || emax === undefined) return null;
  const gammaMax = window?.['gammaMax'];
  return gammaMax === undefined ? { emin, emax } : { emin, emax, gammaMax };
}

/** A run's energy window in words: the range, then the sweep's energies or the width bound. */
export function windowText(window: Run['window']): string {
  const range = `${window['emin']}–${window['emax']} meV`;
  if (window['points'] != null) return `${range}, ${window['points']} energies`;
  return window['gammaMax'] != null ? `${range}, Γ ≤ ${window['gammaMax']} meV` : range;
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
