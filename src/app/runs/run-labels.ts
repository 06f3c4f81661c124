import type { RunKind, RunStatus, RunWindow } from './runs-api';

/** Words for run kinds and statuses, and the window in one line, shared by the run pages. */
export const kindLabel: Record<RunKind, string> = {
  'pole-search': 'Pole search',
  transmission: 'Transmission sweep',
};

export const statusLabel: Record<RunStatus, string> = {
  queued: 'Queued',
  running: 'Running',
  completed: 'Completed',
  failed: 'Failed',
  cancelled: 'Cancelled',
};

export function windowText(window: RunWindow): string {
  const range = `${window.emin}–${window.emax} meV`;
  if ('points' in window) return `${range}, ${window.points} energies`;
  return window.gammaMax != null ? `${range}, Γ ≤ ${window.gammaMax} meV` : range;
}
