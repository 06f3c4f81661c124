/**
 * The values of a study parameter as the command line and the API write them:
 * `FROM:TO:COUNT` (COUNT evenly spaced values, both ends included) or a comma
 * list `v1,v2,v3`.
 */

/** Most steps one study may have (1 or 2 parameters together). */
export const MAX_STUDY_STEPS = 400;

export function parseParameterValues(text: string): number[] {
  const t = text.trim();
  if (t.includes(':')) {
    const parts = t.split(':');
    if (parts.length !== 3) throw new RangeError(`'${text}': a range is FROM:TO:COUNT`);
    const [from, to, count] = parts.map((p) => Number(p));
    if (!Number.isFinite(from) || !Number.isFinite(to)) throw new RangeError(`'${text}': FROM and TO must be numbers`);
    if (!Number.isInteger(count) || count < 2) throw new RangeError(`'${text}': COUNT must be an integer ≥ 2`);
    if (count > MAX_STUDY_STEPS) throw new RangeError(`'${text}': at most ${MAX_STUDY_STEPS} values`);
    return rangeValues(from, to, count);
  }
  const values = t.split(',').map((p) => Number(p.trim()));
  if (values.length === 0 || values.some((v, k) => !Number.isFinite(v) || t.split(',')[k].trim() === '')) {
    throw new RangeError(`'${text}': give FROM:TO:COUNT or a comma list of numbers`);
  }
  if (values.length > MAX_STUDY_STEPS) throw new RangeError(`'${text}': at most ${MAX_STUDY_STEPS} values`);
  return values;
}

/**
 * COUNT evenly spaced values from `from` to `to`, both included (the last is `to` exactly),
 * rounded to 12 significant digits so that 0:0.2:21 gives 0.03, not 0.030000000000000006
 * (the step's model and its label then carry the value the user meant).
 */
export function rangeValues(from: number, to: number, count: number): number[] {
  return Array.from({ length: count }, (_, k) => (k === count - 1 ? to : Number((from + ((to - from) * k) / (count - 1)).toPrecision(12))));
}
