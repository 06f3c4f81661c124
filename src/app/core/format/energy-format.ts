import { Pipe, type PipeTransform } from '@angular/core';

/**
 * Display of the physical figures with units chosen to fit the value, so a width of
 * 0.0004 meV reads "0.40 µeV" and a lifetime of 2400 ps reads "2.40 ns". Pure
 * functions first (tested directly), thin pipes after them for the templates.
 */

/** x with `digits` significant digits, without exponent notation between 1e-3 and 1e6. */
export function significant(x: number, digits = 3): string {
  if (!Number.isFinite(x)) return String(x);
  if (x === 0) return '0';
  const abs = Math.abs(x);
  if (abs >= 1e6 || abs < 1e-3) {
    const [mantissa, exponent] = x.toExponential(digits - 1).split('e');
    return `${mantissa}×10${superscript(Number(exponent))}`;
  }
  const decimals = Math.max(0, digits - 1 - Math.floor(Math.log10(abs)));
  return x.toFixed(decimals);
}

const superDigits = '⁰¹²³⁴⁵⁶⁷⁸⁹';
function superscript(n: number): string {
  const s = String(Math.abs(n))
    .split('')
    .map((d) => superDigits[Number(d)])
    .join('');
  return (n < 0 ? '⁻' : '') + s;
}

/** An energy in meV (resonance positions: 4 significant digits keep neighbouring poles apart). */
export function formatEnergy(meV: number | null | undefined, digits = 4): string {
  if (meV == null || !Number.isFinite(meV)) return '—';
  return `${significant(meV, digits)} meV`;
}

/** A width Γ in meV, shown in meV down to 1 meV, in µeV down to 0.1 µeV, in neV below. */
export function formatWidth(meV: number | null | undefined, digits = 3): string {
  if (meV == null || !Number.isFinite(meV)) return '—';
  if (meV === 0) return '0 meV';
  const abs = Math.abs(meV);
  if (abs >= 1) return `${significant(meV, digits)} meV`;
  if (abs >= 1e-4) return `${significant(meV * 1e3, digits)} µeV`;
  return `${significant(meV * 1e6, digits)} neV`;
}

/** A lifetime in ps, shown in fs, ps, ns or µs; null (a bound state) is an infinite lifetime. */
export function formatLifetime(ps: number | null | undefined, digits = 3): string {
  if (ps === null) return '∞';
  if (ps === undefined || !Number.isFinite(ps)) return '—';
  const abs = Math.abs(ps);
  if (abs < 1) return `${significant(ps * 1e3, digits)} fs`;
  if (abs < 1e3) return `${significant(ps, digits)} ps`;
  if (abs < 1e6) return `${significant(ps / 1e3, digits)} ns`;
  return `${significant(ps / 1e6, digits)} µs`;
}

/** A quality factor, dimensionless; null (a bound state) is shown as ∞. */
export function formatQuality(q: number | null | undefined, digits = 3): string {
  if (q === null) return '∞';
  if (q === undefined || !Number.isFinite(q)) return '—';
  return significant(q, digits);
}

/** Expected run time in seconds as "40 s", "3.5 min" or "2.1 h". */
export function formatDuration(seconds: number | null | undefined): string {
  if (seconds == null || !Number.isFinite(seconds)) return '—';
  if (seconds < 1) return '< 1 s';
  if (seconds < 90) return `${Math.round(seconds)} s`;
  if (seconds < 5400) return `${significant(seconds / 60, 2)} min`;
  return `${significant(seconds / 3600, 2)} h`;
}

@Pipe({ name: 'energy' })
export class EnergyPipe implements PipeTransform {
  transform(meV: number | null | undefined, digits?: number): string {
    return formatEnergy(meV, digits);
  }
}

@Pipe({ name: 'width' })
export class WidthPipe implements PipeTransform {
  transform(meV: number | null | undefined, digits?: number): string {
    return formatWidth(meV, digits);
  }
}

@Pipe({ name: 'lifetime' })
export class LifetimePipe implements PipeTransform {
  transform(ps: number | null | undefined, digits?: number): string {
    return formatLifetime(ps, digits);
  }
}

@Pipe({ name: 'quality' })
export class QualityPipe implements PipeTransform {
  transform(q: number | null | undefined, digits?: number): string {
    return formatQuality(q, digits);
  }
}
