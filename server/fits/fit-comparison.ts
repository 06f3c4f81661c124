/**
 * A fitted peak against the nearest computed pole of the chosen model: agreement of E and
 * Γ in percent of the pole's values and in units of the fit's own standard errors, plus the
 * statements a user needs when the comparison can mislead.
 */
import type { FittedPeak } from '../../shared/engine/fit.js';
import { OVERLAP_PETERMANN } from '../jobs/run-results.js';
import type { PoleComparison } from '../../shared/api/fits.js';

/** A computed pole a fitted peak may be compared with (the pole of a PoleComparison). */
export type CandidatePole = NonNullable<PoleComparison['pole']>;

export type { PoleComparison } from '../../shared/api/fits.js';

/**
 * The nearest pole by complex distance |z_fit − z_pole| with z = E − iΓ/2 (by width alone
 * when positions are not comparable), among non-bound computed poles.
 */
export function comparePeaks(peaks: FittedPeak[], poles: CandidatePole[], positionComparable: boolean): PoleComparison[] {
  return peaks.map((pk, k) => {
    let best: CandidatePole | null = null;
    let bestDistance = Infinity;
    for (const p of poles) {
      const d = positionComparable ? Math.hypot(p.energy - pk.energy, (p.width - pk.width) / 2) : Math.abs(p.width - pk.width);
      if (d < bestDistance) {
        bestDistance = d;
        best = p;
      }
    }
    const warnings: string[] = [];
    if (!best) {
      warnings.push('No computed pole of this model to compare with: run a pole search over this energy range first.');
      return { peak: k, pole: null, energyPercent: null, energySigmas: null, widthPercent: null, widthSigmas: null, positionComparable, warnings };
    }
    if (!positionComparable)
      warnings.push(
        'The trace is in gate voltage: its energy zero is arbitrary, so only the width is compared (the nearest pole is the one of nearest width).',
      );
    if (best.overlapping || (best.petermann !== null && best.petermann > OVERLAP_PETERMANN))
      warnings.push(
        `The nearest pole overlaps its neighbours (Petermann factor ${best.petermann?.toFixed(3) ?? 'unknown'}${best.overlapping ? ', a neighbour within the mean of the widths' : ''}): a Breit–Wigner width is not meaningful for it; compare with care.`,
      );
    const dE = pk.energy - best.energy;
    const dG = pk.width - best.width;
    if (positionComparable && Math.abs(dE) > 3 * Math.max(best.width, pk.width))
      warnings.push(`The nearest pole is ${Math.abs(dE).toPrecision(3)} meV away, more than three widths: it may not be the resonance you measured.`);
    return {
      peak: k,
      pole: best,
      energyPercent: positionComparable ? (100 * dE) / best.energy : null,
      energySigmas: positionComparable && pk.energyError ? dE / pk.energyError : null,
      widthPercent: best.width > 0 ? (100 * dG) / best.width : null,
      widthSigmas: pk.widthError ? dG / pk.widthError : null,
      positionComparable,
      warnings,
    };
  });
}
