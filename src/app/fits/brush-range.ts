/**
 * The energy range a lineX brush drag selected on the fit chart, read from echarts'
 * `brushEnd` event (its first area's coordRange, in data units of the brushed x axis),
 * ordered low to high. Null when the brush was cleared or the drag was a click.
 */
export function brushRange(event: unknown): { from: number; to: number } | null {
  const areas = (event as { areas?: { coordRange?: unknown }[] } | null)?.areas;
  const range = areas?.[0]?.coordRange;
  if (!Array.isArray(range) || range.length !== 2) return null;
  const [a, b] = range as unknown[];
  if (typeof a !== 'number' || typeof b !== 'number' || !Number.isFinite(a) || !Number.isFinite(b) || a === b) return null;
  return { from: Math.min(a, b), to: Math.max(a, b) };
}
