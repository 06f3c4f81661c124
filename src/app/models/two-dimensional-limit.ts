import type { DerivedFiguresAnswer as DerivedFigures } from '../../../shared/api/models';
import { frequencyOfWavenumberSquared } from '../../../shared/units/microwave';

/**
 * The editor's warning for a microwave resonator whose figures reach above its 2D limit
 * c/(2h√ε_r) (docs/physics-model.md, "Physics modes"): the trusted lattice ceiling or a
 * lead channel threshold (k², mm⁻²) at a frequency where the first vertical mode already
 * propagates. null for electrons or when everything stays below the limit.
 */
export function twoDimensionalLimitWarning(d: DerivedFigures): string | null {
  const limit = d.twoDimensionalLimitGhz;
  if (d.physics !== 'microwave' || limit == null || d.permittivity == null) return null;
  const f = (k2: number) => frequencyOfWavenumberSquared(k2, d.permittivity!);
  const ceiling = f(Math.min(d.energyCeiling, d.wavelengthCeiling));
  const thresholds = d.leads.flatMap((l) => l.thresholds.map((t) => f(t.opens))).filter((x) => x > limit);
  const parts: string[] = [];
  if (ceiling > limit) parts.push(`the lattice is trusted up to ${ceiling.toPrecision(4)} GHz`);
  if (thresholds.length) parts.push(`${thresholds.length} lead channel threshold(s) lie above it, from ${Math.min(...thresholds).toPrecision(4)} GHz`);
  if (!parts.length) return null;
  return `Above ${limit.toPrecision(4)} GHz (the 2D limit c/(2h√ε_r) for h = ${d.heightMm} mm, ε_r = ${d.permittivity}) the first vertical mode propagates and the flat-resonator picture fails, but ${parts.join('; ')}. Keep run windows below ${limit.toPrecision(4)} GHz, or lower the height.`;
}

/** The trusted ceiling of a microwave model as a frequency (GHz), for the derived figures. */
export function ceilingGhz(d: DerivedFigures): number | null {
  if (d.physics !== 'microwave' || d.permittivity == null) return null;
  return frequencyOfWavenumberSquared(Math.min(d.energyCeiling, d.wavelengthCeiling), d.permittivity);
}
