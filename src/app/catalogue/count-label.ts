import type { CataloguePage } from '../../../shared/api/catalogue';

/** "20 s", "3 min", "2 h": how long ago a count was taken, in the coarsest unit that fits. */
export function ageText(seconds: number): string {
  if (seconds < 60) return `${Math.round(seconds)} s`;
  if (seconds < 3600) return `${Math.round(seconds / 60)} min`;
  return `${Math.round(seconds / 3600)} h`;
}

/** A rough number as people say it: three significant figures, grouped ("about 41,200"). */
function rounded(n: number): string {
  if (n < 1000) return n.toLocaleString('en-US');
  const step = 10 ** (Math.floor(Math.log10(n)) - 2);
  return (Math.round(n / step) * step).toLocaleString('en-US');
}

/**
 * The total of a catalogue answer with the way it was obtained, so an estimate is never
 * read as a count: "41,213 resonances", "41,213 resonances (counted 20 s ago)",
 * "about 41,200 resonances (estimated)".
 */
export function countLabel(page: Pick<CataloguePage, 'total' | 'totalKind' | 'countAgeSeconds'>): string {
  const noun = page.total === 1 && page.totalKind !== 'estimated' ? 'resonance' : 'resonances';
  switch (page.totalKind) {
    case 'exact':
      return `${page.total.toLocaleString('en-US')} ${noun}`;
    case 'cached':
      return `${page.total.toLocaleString('en-US')} ${noun} (counted ${ageText(page.countAgeSeconds ?? 0)} ago)`;
    case 'estimated':
      return `about ${rounded(page.total)} ${noun} (estimated)`;
  }
}
