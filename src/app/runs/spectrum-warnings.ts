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
  if (stats?.['spectrumBudgetExhausted'] === true) {
    out.push(
      'The spectrum ran out of its refinement budget: narrow resonances may be missing from the curve or drawn too low.' +
        (run.kind === 'pole-search'
          ? ' The poles listed are complete; check a narrow one with a transmission run around it.'
          : ' Run a narrower window for the full curve.'),
    );
  }
  return out;
}
