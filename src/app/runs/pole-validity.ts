import type { ResonanceRow } from '../../../shared/api/resonance-row';

/** What a validity mark on a pole means, for the tooltip and the screen reader. */
export const aboveLimitMeaning =
  'Above the lattice-validity limit of its model: a wavelength spans fewer than 10 lattice spacings, so E and Γ carry a discretisation error; refine the grid before trusting them.';

/**
 * The plain line above a run's pole table: how many poles lie above the figure up to which
 * the lattice is trusted (meV, or GHz for a microwave model, from the rows' stored validity;
 * nothing recomputed). null when the rows carry no validity figures (rows from before them).
 */
export function validitySummary(poles: readonly ResonanceRow[]): string | null {
  const known = poles.filter((p) => p.validity?.limit != null);
  if (!known.length) return null;
  const above = poles.filter((p) => p.validity?.aboveLimit === true).length;
  const first = known[0];
  const microwave = first.physics === 'microwave';
  const ghz = first.microwave?.validityLimitGhz;
  const limit = microwave && ghz != null ? `${ghz.toPrecision(4)} GHz` : `${first.validity!.limit!.toPrecision(4)} ${microwave ? 'mm⁻² (k²)' : 'meV'}`;
  const what = microwave ? 'frequency' : 'energy';
  return `${above} of ${poles.length} pole${poles.length === 1 ? '' : 's'} lie above the ${what} where the lattice is trusted (${limit}).`;
}

/** The table cells of a microwave pole, from the row's stored `microwave` block (never recomputed). */
export function microwaveCells(p: ResonanceRow): { frequency: string; width: string; lifetime: string; quality: string } | null {
  const m = p.microwave;
  if (!m) return null;
  return {
    frequency: `${m.frequencyGhz.toFixed(6)} GHz`,
    width: `${m.widthMhz.toPrecision(4)} MHz`,
    lifetime: m.lifetimeNs == null ? '∞ (bound)' : `${m.lifetimeNs.toPrecision(4)} ns`,
    quality: m.quality == null ? '∞' : m.quality >= 1e4 ? m.quality.toExponential(3) : m.quality.toFixed(0),
  };
}
