import type { RunDetail } from '../../../shared/api/runs';

/**
 * What a reader of the spectrum must know before trusting it, in plain words: the
 * adaptive refinement stopped on its budget with intervals still flagged, so a
 * resonance narrower than the remaining sample spacing may be missing from the curve.
 */
export function spectrumWarnings(run: Pick<RunDetail, 'stats' | 'spectrum' | 'kind'>): string[] {
  const out: string[] = [];
  if (!run.spectrum) return out;
  const stats = run.stats as Record<string, unknown> | null | undefined; // engine counters, an open record in the contract
  if (stats?.['spectrumBudgetExhausted'] === true && run.kind === 'pole-search' && Number(stats['spectrumPoleSamples'] ?? 0) > 0) {
    out.push(
      'The spectrum stopped refining on its budget: between samples the curve may be coarse. Every listed pole is sampled at E and ' +
        'E ± Γ/2, so each listed resonance is drawn at its full height; for a finer curve run a transmission sweep over a narrower window.',
    );
  } else if (stats?.['spectrumBudgetExhausted'] === true) {
    out.push(
      'The spectrum ran out of its refinement budget: narrow resonances may be missing from the curve or drawn too low.' +
        (run.kind === 'pole-search'
          ? ' The poles listed are complete; check a narrow one with a transmission run around it.'
          : ' Run a narrower window for the full curve.'),
    );
  }
  return out;
}
