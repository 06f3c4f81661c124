import type { Run } from '../../../../shared/api/runs';

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
