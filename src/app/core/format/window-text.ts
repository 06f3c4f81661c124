import type { RunWindow } from '../answers/run-window';

/** A run's energy window in words: the range, then the sweep's energies or the width bound. */
export function windowText(window: RunWindow): string {
  const range = `${window.emin}–${window.emax} meV`;
  if ('points' in window) return `${range}, ${window.points} energies`;
  return window.gammaMax != null ? `${range}, Γ ≤ ${window.gammaMax} meV` : range;
}
