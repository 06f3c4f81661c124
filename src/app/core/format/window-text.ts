import type { Run } from '../../../../shared/api/runs';

/** A run's energy window in words: the range, then the sweep's energies or the width bound. */
export function windowText(window: Run['window']): string {
  const range = `${window['emin']}–${window['emax']} meV`;
  if (window['points'] != null) return `${range}, ${window['points']} energies`;
  return window['gammaMax'] != null ? `${range}, Γ ≤ ${window['gammaMax']} meV` : range;
}
