import { createHash } from 'node:crypto';
import { sql, type SQL } from 'drizzle-orm';
import { z } from 'zod';
import { ApiError } from '../http/error-handler.js';
import { catalogueSorts, sortKey, type CatalogueFilter, type CatalogueSort, type KeyType } from './catalogue-query.js';

/**
 * Keyset (cursor) paging of the catalogue. A page after (or before) a boundary row is
 * `WHERE (sort key…, energy, id) > (the boundary's values…)` in the sort's order: an index
 * bound, so page 4,000 costs what page 1 costs, where OFFSET would read and drop every
 * row before it. The cursor is opaque to clients (base64url JSON); it names the filter it
 * belongs to, so it cannot silently page through a different search.
 */

/**
 * A key value as the cursor carries it: numbers as their shortest exact decimal text
 * ("Infinity" for the +∞ of a bound state's Q or a missing dimension), timestamps as
 * PostgreSQL's own text (microseconds kept; a JavaScript Date would drop them and
 * skip rows), text arrays as arrays.
 */
export type KeyValue = string | string[];

export interface CursorPosition {
  /** The rows after the boundary (the next page) or before it (the previous page). */
  toward: 'after' | 'before';
  /** The boundary row's values of sortKey(sort), in order. */
  key: KeyValue[];
  /** The 1-based number of the page the cursor leads to: a label for the screen (rows added earlier in the order shift it). */
  page: number;
}

const wireSchema = z.object({
  v: z.literal(1),
  s: z.enum(catalogueSorts),
  d: z.enum(['asc', 'desc']),
  f: z.string(),
  t: z.enum(['a', 'b']),
  k: z.array(z.union([z.string().max(500), z.array(z.string().max(40)).max(20)])).max(12),
  p: z.number().int().min(1).max(100_000_000),
});

const valueChecks: Record<KeyType, (v: KeyValue) => boolean> = {
  float8: (v) => typeof v === 'string' && (v === 'Infinity' || v === '-Infinity' || (v.trim() !== '' && Number.isFinite(Number(v)))),
  int4: (v) => typeof v === 'string' && /^-?\d{1,10}$/.test(v),
  text: (v) => typeof v === 'string',
  'text[]': (v) => Array.isArray(v),
  // PostgreSQL's ISO output of timestamptz, e.g. 2025-01-03 00:00:00.123456+00
  timestamptz: (v) => typeof v === 'string' && /^\d{4}-\d{2}-\d{2} \d{2}:\d{2}:\d{2}(\.\d{1,6})?[+-]\d{2}(:\d{2}){0,2}$/.test(v),
  uuid: (v) => typeof v === 'string' && /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i.test(v),
};

/** What the rows of a search are: the filter and the order. Two requests with the same fingerprint page through the same sequence. */
export function searchFingerprint(filter: CatalogueFilter): string {
  const canonical = {
    family: filter.family ? [...filter.family].sort() : null,
    material: filter.material ? [...filter.material].sort() : null,
    q: filter.q ?? null,
    tags: filter.tags ? [...filter.tags].sort() : null,
    bound: filter.bound ?? null,
    ranges: Object.fromEntries(Object.entries(filter.ranges).sort(([a], [b]) => a.localeCompare(b))),
    // Added only when given, so the fingerprints of earlier searches stay as they were.
    ...(filter.aboveLimit !== undefined ? { aboveLimit: filter.aboveLimit } : {}),
    ...(filter.physics ? { physics: [...filter.physics].sort() } : {}),
    ...(filter.source ? { source: filter.source } : {}),
  };
  return createHash('sha256').update(JSON.stringify(canonical)).digest('base64url').slice(0, 16);
}

export function encodeCursor(filter: CatalogueFilter, position: CursorPosition): string {
  const wire: z.infer<typeof wireSchema> = {
    v: 1,
    s: filter.sort,
    d: filter.dir,
    f: searchFingerprint(filter),
    t: position.toward === 'after' ? 'a' : 'b',
    k: position.key,
    p: position.page,
  };
  return Buffer.from(JSON.stringify(wire)).toString('base64url');
}

function cursorError(message: string): ApiError {
  return new ApiError(400, 'validation_failed', `Some fields are not valid: query.cursor (${message}).`, [{ path: 'query.cursor', message }]);
}

/** The position a cursor names, checked against the request's own filter and sort; 400 naming query.cursor otherwise. */
export function decodeCursor(cursor: string, filter: CatalogueFilter): CursorPosition {
  let wire: z.infer<typeof wireSchema>;
  try {
    wire = wireSchema.parse(JSON.parse(Buffer.from(cursor, 'base64url').toString('utf8')));
  } catch {
    throw cursorError('is not a cursor of this API (take nextCursor or prevCursor from an answer)');
  }
  if (wire.s !== filter.sort || wire.d !== filter.dir || wire.f !== searchFingerprint(filter)) {
    throw cursorError('belongs to a different filter or sort; start again from the first page (leave cursor out)');
  }
  const parts = sortKey(filter.sort);
  if (wire.k.length !== parts.length || !parts.every((p, i) => valueChecks[p.type](wire.k[i]!))) {
    throw cursorError('is not a cursor of this API (take nextCursor or prevCursor from an answer)');
  }
  return { toward: wire.t === 'a' ? 'after' : 'before', key: wire.k, page: wire.p };
}

/**
 * `(key…) > (values…)` (or `<`): the rows strictly beyond the boundary in the direction of
 * travel. A row comparison over the leading columns of the sort's index, which PostgreSQL
 * uses as the scan's start, not as a filter.
 */
export function keysetCondition(sort: CatalogueSort, dir: 'asc' | 'desc', position: CursorPosition): SQL {
  const parts = sortKey(sort);
  const columns = sql.join(
    parts.map((p) => sql`${p.expr}`),
    sql`, `,
  );
  const values = sql.join(
    parts.map((p, i) => sql`${sql.param(position.key[i])}::${sql.raw(p.type)}`),
    sql`, `,
  );
  const greater = (dir === 'asc') === (position.toward === 'after');
  return sql`(${columns}) ${greater ? sql.raw('>') : sql.raw('<')} (${values})`;
}

/** The SELECT expressions that read a row's key in the cursor's text form (see KeyValue). */
export function keyFields(sort: CatalogueSort): Record<string, SQL.Aliased> {
  // Aliased k0, k1…: the plain driver row then holds them under names no column has.
  return Object.fromEntries(
    sortKey(sort).map((p, i) => [`k${i}`, (p.type === 'timestamptz' ? sql`${p.expr}::text` : sql`${p.expr}`).as(`k${i}`)]),
  );
}

/** A driver value of a key field → its cursor text. Doubles print as their shortest exact decimal (Number#toString). */
export function toKeyValue(value: unknown): KeyValue {
  if (Array.isArray(value)) return value.map(String);
  return String(value);
}
