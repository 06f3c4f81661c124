import type { PotentialTerm } from '../../../shared/model/cavity-model';
import type { GridExtent } from './shape-kinds';

/** The potential term families with the words the editor shows. */
export const potentialKindLabels = {
  block: 'Gate or tunnel barrier (block)',
  gaussian: 'Gaussian bump',
  disorder: 'Disorder',
  sites: 'Values on listed sites (JSON)',
} as const;
export type PotentialKind = keyof typeof potentialKindLabels;

/** The number fields of each term family (lengths nm, energies meV). */
export const potentialNumberFields: Record<Exclude<PotentialKind, 'sites'>, { key: string; label: string }[]> = {
  block: [
    { key: 'x0', label: 'Left edge x₀ (nm)' },
    { key: 'y0', label: 'Bottom edge y₀ (nm)' },
    { key: 'width', label: 'Width (nm)' },
    { key: 'height', label: 'Height (nm)' },
    { key: 'value', label: 'Potential V (meV)' },
  ],
  gaussian: [
    { key: 'cx', label: 'Centre x (nm)' },
    { key: 'cy', label: 'Centre y (nm)' },
    { key: 'sigma', label: 'Spread σ (nm)' },
    { key: 'amplitude', label: 'Peak A (meV)' },
  ],
  disorder: [
    { key: 'strength', label: 'Strength W (meV)' },
    { key: 'seed', label: 'Seed' },
  ],
};

/** A new term of a family, placed in the middle of the grid: a thin barrier across it, a bump at its centre. */
export function defaultTerm(kind: PotentialKind, extent: GridExtent, random: () => number = Math.random): PotentialTerm {
  const w = extent.widthNm > 0 ? extent.widthNm : 300;
  const h = extent.heightNm > 0 ? extent.heightNm : 200;
  const r = (v: number) => Number(v.toPrecision(3));
  switch (kind) {
    case 'block':
      return { kind, x0: r(w * 0.45), y0: 0, width: r(w * 0.05), height: r(h), value: 2 };
    case 'gaussian':
      return { kind, cx: r(w / 2), cy: r(h / 2), sigma: r(Math.min(w, h) * 0.1), amplitude: 1 };
    case 'disorder':
      return { kind, strength: 0.5, seed: newSeed(random) };
    case 'sites':
      return { kind, values: [[0, 0, 0]] };
  }
}

/** A fresh seed in the schema's range [0, 2^32 − 1]. */
export function newSeed(random: () => number = Math.random): number {
  return Math.floor(random() * 0xffffffff);
}
