import type { z } from 'zod';
import type { parameterValuesSchema } from '../../../shared/api/studies';

type ParameterValues = z.infer<typeof parameterValuesSchema>;

/**
 * Reads the values of a swept parameter as typed: `FROM:TO:COUNT` (both ends included)
 * or a list separated by commas or spaces. Returns the request's form, or a message
 * saying what is wrong.
 */
export function parseParameterValues(text: string): { values: ParameterValues } | { error: string } {
  const t = text.trim();
  if (!t) return { error: 'Give the values as FROM:TO:COUNT or a list such as 0, 0.5, 1.' };
  if (t.includes(':')) {
    const parts = t.split(':').map((p) => p.trim());
    if (parts.length !== 3) return { error: `"${t}" should have three parts, FROM:TO:COUNT.` };
    const [from, to, count] = parts.map(Number) as [number, number, number];
    if (!Number.isFinite(from) || !Number.isFinite(to)) return { error: `FROM and TO of "${t}" must be numbers.` };
    if (!Number.isInteger(count) || count < 2 || count > 400) return { error: `COUNT of "${t}" must be a whole number from 2 to 400.` };
    if (from === to) return { error: 'FROM and TO are the same value; give a list for a single value.' };
    return { values: { from, to, count } };
  }
  const items = t.split(/[\s,;]+/).filter(Boolean);
  const list = items.map(Number);
  const bad = items.find((_, i) => !Number.isFinite(list[i]));
  if (bad !== undefined) return { error: `"${bad}" in the list is not a number.` };
  if (list.length > 400) return { error: `At most 400 values (${list.length} given).` };
  return { values: { list } };
}

/** The values a parsed entry stands for, in order (for the step count and the axis). */
export function expandValues(values: ParameterValues): number[] {
  if ('list' in values) return values.list;
  const { from, to, count } = values;
  return Array.from({ length: count }, (_, i) => from + ((to - from) * i) / (count - 1));
}

/** A step's parameter value for a label: 10 significant digits, so 0.030000000000000006 (studies stored before values were rounded) reads 0.03. */
export function stepValueText(v: number): string {
  return Number.isFinite(v) ? Number(v.toPrecision(10)).toString() : String(v);
}
