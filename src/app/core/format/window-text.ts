import type { Run } from '../../../../shared/api/runs';
import { frequencyOfWavenumberSquared } from '../../../../shared/units/microwave';

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

/** A microwave run's window (stored as k² in mm⁻²) as a frequency range in GHz; the plain text when ε_r or the range is missing. */
export function frequencyWindowText(window: Run['window'], permittivity: number): string {
  const emin = window['emin'];
  const emax = window['emax'];
  if (!(permittivity > 0) || emin == null || emax == null) return windowText(window);
  const ghz = (k2: number) => frequencyOfWavenumberSquared(k2, permittivity).toFixed(2);
  return `${ghz(emin)}–${ghz(emax)} GHz`;
}
