// Answer types that more than one feature reads, kept here so that features do not
// import each other; they move to the HTTP contract (shared/api) with the other answers.

/** A pole search looks for poles with E in [emin, emax] meV and Γ ≤ gammaMax meV. */
export interface PoleWindow {
  emin: number;
  emax: number;
  gammaMax?: number;
}
/** A transmission sweep samples `points` real energies in [emin, emax] meV. */
export interface SweepWindow {
  emin: number;
  emax: number;
  points: number;
}
export type RunWindow = PoleWindow | SweepWindow;
