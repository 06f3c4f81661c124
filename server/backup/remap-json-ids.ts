import type { RestoredIds } from './backup-section.js';

const UUID = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i;

/**
 * A JSON value (a fit's request and comparison, a fitted resonance's details, a map's
 * parameters) with every id of the archive replaced by its new id. An id that is not in
 * the archive (a pole a later run replaced) becomes null: the link is lost, never left
 * pointing at the other server's rows.
 */
export function remapJsonIds<T>(value: T, ids: RestoredIds): T {
  const all = [ids.models, ids.modelVersions, ids.runs, ids.resonances, ids.traces, ids.fits];
  const walk = (v: unknown): unknown => {
    if (typeof v === 'string') return UUID.test(v) ? (all.find((m) => m.has(v))?.get(v) ?? null) : v;
    if (Array.isArray(v)) return v.map(walk);
    if (v && typeof v === 'object') return Object.fromEntries(Object.entries(v).map(([k, x]) => [k, walk(x)]));
    return v;
  };
  return walk(value) as T;
}
