import type { Spectrum } from '../../../shared/api/runs';

/** What the spectrum chart plots: transmission T, or the conductance G from it (Landauer). */
export type SpectrumQuantity = 'transmission' | 'conductance';
/** G in 2e²/h (spin-degenerate: G = (2e²/h)·T), in e²/h for one spin (G_σ = (e²/h)·T), or in µS. */
export type ConductanceUnit = '2e2/h' | 'e2/h' | 'uS';

/**
 * e²/h in µS: 1 / R_K with the von Klitzing constant R_K = 25 812.807 45… Ω (exact in
 * the 2019 SI; CODATA 2018).
 */
export const E2_OVER_H_US = 1e6 / 25812.80745;

export const conductanceUnitLabels: Record<ConductanceUnit, string> = {
  '2e2/h': '2e²/h, both spins',
  'e2/h': 'e²/h, one spin',
  uS: 'µS, both spins',
};

/** Factor from T to G in the unit: the engine's leads are spinless, so T counts one spin. */
export function conductanceFactor(unit: ConductanceUnit): number {
  return unit === '2e2/h' ? 1 : unit === 'e2/h' ? 1 : 2 * E2_OVER_H_US;
}

interface SpectrumCurve {
  name: string;
  values: (number | null)[];
}

/** Two curves count as one when they differ by less than this, relative to the larger T (common practice, no source). */
const SAME_CURVE = 1e-6;

/**
 * The curves of a spectrum: one per lead pair, except that a pair measured both ways
 * (ℓ → ℓ′ and ℓ′ → ℓ) with equal values, as for any two-terminal device (unitarity
 * makes T₁₂ = T₂₁ there, with or without field), is drawn once as T(ℓ ↔ ℓ′).
 * Pairs that differ (multi-terminal devices in a field) keep both curves.
 */
export function spectrumCurves(
  spectrum: Spectrum,
  leadNames: readonly string[],
  quantity: SpectrumQuantity = 'transmission',
  unit: ConductanceUnit = '2e2/h',
): { curves: SpectrumCurve[]; merged: number } {
  const leadName = (k: number | string) => (typeof k === 'number' ? (leadNames[k] ?? `lead ${k + 1}`) : k);
  const used = new Set<number>();
  const curves: SpectrumCurve[] = [];
  const factor = quantity === 'conductance' ? conductanceFactor(unit) : 1;
  const symbol = quantity === 'conductance' ? 'G' : 'T';
  let merged = 0;
  spectrum.pairs.forEach((pair, k) => {
    if (used.has(k)) return;
    used.add(k);
    const row = spectrum.transmission[k] ?? [];
    const back = spectrum.pairs.findIndex((p, n) => !used.has(n) && p.from === pair.to && p.to === pair.from);
    let arrow = '→';
    if (back >= 0 && sameCurve(row, spectrum.transmission[back] ?? [])) {
      used.add(back);
      arrow = '↔';
      merged++;
    }
    curves.push({
      name: `${symbol}(${leadName(pair.from)} ${arrow} ${leadName(pair.to)})`,
      values: spectrum.energies.map((_, n) => (row[n] == null ? null : row[n] * factor)),
    });
  });
  return { curves, merged };
}

function sameCurve(a: readonly number[], b: readonly number[]): boolean {
  if (a.length !== b.length) return false;
  let scale = 1;
  for (const v of a) scale = Math.max(scale, Math.abs(v));
  for (let n = 0; n < a.length; n++) if (Math.abs(a[n] - b[n]) > SAME_CURVE * scale) return false;
  return true;
}
