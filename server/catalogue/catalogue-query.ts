import { and, arrayContains, eq, gte, inArray, lte, SQL, sql, type AnyColumn } from 'drizzle-orm';
import type { z } from 'zod';
import {
  CATALOGUE_RANGES as ranges,
  catalogueFilterSchema,
  catalogueQuerySchema,
  countKinds,
  type CatalogueSort,
  type RangeName,
} from '../../shared/api/catalogue-query.js';
import { nullAsInfinity, resonances } from '../db/schema/catalogue.js';

// The query schemas are part of the HTTP contract (shared/api); the SQL they turn into is here.
export { catalogueQuerySchema, catalogueSorts, type CatalogueSort } from '../../shared/api/catalogue-query.js';

type ParsedFilter = z.infer<typeof catalogueFilterSchema>;

/** The parsed filter in the shape the repository uses. */
export interface CatalogueFilter {
  family?: string[];
  material?: string[];
  q?: string;
  tags?: string[];
  bound?: boolean;
  /** Above (true) or within (false) the lattice-validity limit. */
  aboveLimit?: boolean;
  physics?: ('electrons' | 'microwave')[];
  /** Only computed poles, or only fitted resonances. */
  source?: 'computed' | 'fitted';
  ranges: Partial<Record<RangeName, { min?: number; max?: number }>>;
  sort: CatalogueSort;
  dir: 'asc' | 'desc';
}

export interface CataloguePageRequest extends CatalogueFilter {
  /** Offset paging (1-based); undefined with a cursor. */
  page?: number;
  pageSize: number;
  /** The opaque keyset cursor of a previous answer (nextCursor / prevCursor). */
  cursor?: string;
  /** 'estimate': a planner estimate or a cached exact count when the set is large; 'exact': count now. */
  count: (typeof countKinds)[number];
}

export function toCatalogueFilter(parsed: ParsedFilter): CatalogueFilter {
  const out: CatalogueFilter = { ranges: {}, sort: parsed.sort as CatalogueSort, dir: parsed.dir as 'asc' | 'desc' };
  if (parsed.family) out.family = parsed.family as string[];
  if (parsed.material) out.material = parsed.material as string[];
  if (parsed.q) out.q = parsed.q as string;
  if (parsed.tag) out.tags = [...new Set(parsed.tag as string[])];
  if (parsed.bound !== undefined) out.bound = parsed.bound as boolean;
  if (parsed.aboveLimit !== undefined) out.aboveLimit = parsed.aboveLimit as boolean;
  if (parsed.physics) out.physics = [...new Set(parsed.physics as ('electrons' | 'microwave')[])];
  if (parsed.source) out.source = parsed.source as 'computed' | 'fitted';
  for (const [name, r] of Object.entries(ranges) as [RangeName, (typeof ranges)[RangeName]][]) {
    const min = (parsed as Record<string, unknown>)[r.min] as number | undefined;
    const max = (parsed as Record<string, unknown>)[r.max] as number | undefined;
    if (min !== undefined || max !== undefined) out.ranges[name] = { min, max };
  }
  return out;
}

export function toCataloguePageRequest(parsed: z.infer<typeof catalogueQuerySchema>): CataloguePageRequest {
  const out: CataloguePageRequest = {
    ...toCatalogueFilter(parsed as ParsedFilter),
    pageSize: parsed.pageSize as number,
    count: parsed.count as CataloguePageRequest['count'],
  };
  if (parsed.cursor !== undefined) out.cursor = parsed.cursor as string;
  else out.page = (parsed.page as number | undefined) ?? 1;
  return out;
}

/**
 * The expression each range filters. Null lifetime and Q mean infinite (bound states), so
 * they are filtered through the same +Infinity key their sort indexes hold: a lower bound
 * keeps bound states, an upper bound drops them, and the index serves both.
 */
const rangeColumns: Record<RangeName, AnyColumn | SQL> = {
  energy: resonances.energy,
  width: resonances.width,
  quality: nullAsInfinity(resonances.quality),
  lifetime: nullAsInfinity(resonances.lifetimePs),
  field: resonances.fieldT,
  // Dimensions through the expressions of their sort indexes (a missing one is +Infinity,
  // kept out by dimensionPresent), so a range on the dimension one sorts by bounds the scan.
  dimWidth: nullAsInfinity(resonances.widthNm),
  dimHeight: nullAsInfinity(resonances.heightNm),
  dimRadius: nullAsInfinity(resonances.radiusNm),
  dimLength: nullAsInfinity(resonances.lengthNm),
  dimRx: nullAsInfinity(resonances.rxNm),
  dimRy: nullAsInfinity(resonances.ryNm),
  dimInner: nullAsInfinity(resonances.innerNm),
  dimOuter: nullAsInfinity(resonances.outerNm),
  dimArea: nullAsInfinity(resonances.areaNm2),
  frequency: resonances.frequencyGhz,
  // Infinite λ (at or below the band bottom) is stored as null: it passes a lower bound only.
  wavelength: nullAsInfinity(resonances.wavelengthSpacings),
};

/**
 * Free text → a prefix tsquery. search_text is to_tsvector('simple', model_name || ' ' || notes):
 * PostgreSQL's default parser splits it into words (hyphenated and underscored words also
 * into their parts), and the 'simple' configuration only lower-cases them (no stemming, no
 * stop words). The user's text is split on white space, tsquery operator characters are
 * removed, and each word becomes `word:*`, all ANDed; to_tsquery then parses each word with
 * the same parser, so "disk-12" matches the way it was indexed.
 */
function prefixQuery(text: string): string | null {
  const words = text
    .split(/\s+/)
    .map((w) => w.replace(/[&|!():*<>'"\\]/g, ''))
    .filter((w) => /[\p{L}\p{N}]/u.test(w));
  return words.length === 0 ? null : words.map((w) => `${w}:*`).join(' & ');
}

/** WHERE conditions of a catalogue search, always starting with the group. */
export function catalogueConditions(groupId: string, f: CatalogueFilter): SQL {
  const conds: SQL[] = [eq(resonances.groupId, groupId)];
  if (f.family) conds.push(inArray(resonances.family, f.family));
  if (f.material) conds.push(inArray(resonances.material, f.material));
  if (f.bound !== undefined) conds.push(eq(resonances.bound, f.bound));
  if (f.aboveLimit !== undefined) conds.push(eq(resonances.aboveValidity, f.aboveLimit));
  if (f.physics) conds.push(inArray(resonances.physics, f.physics));
  if (f.source) conds.push(eq(resonances.source, f.source));
  if (f.tags) conds.push(arrayContains(resonances.tags, f.tags));
  if (f.q) {
    const tsquery = prefixQuery(f.q);
    // Nothing searchable (only punctuation): no row can match, rather than ignoring the box.
    conds.push(tsquery ? sql`${resonances.searchText} @@ to_tsquery('simple', ${tsquery})` : sql`false`);
  }
  for (const [name, r] of Object.entries(f.ranges) as [RangeName, { min?: number; max?: number }][]) {
    const col = rangeColumns[name];
    if (r.min !== undefined) conds.push(col instanceof SQL ? gte(col, r.min) : gte(col, r.min));
    if (r.max !== undefined) conds.push(col instanceof SQL ? lte(col, r.max) : lte(col, r.max));
    // A dimension filter keeps only the rows that have the dimension (not the +Infinity of a missing one).
    if (name.startsWith('dim')) conds.push(sql`${col} < 'Infinity'::float8`);
  }
  return and(...conds)!;
}

/** How a sort key's value travels in a cursor, and the SQL type it is compared as. */
export type KeyType = 'float8' | 'int4' | 'text' | 'text[]' | 'timestamptz' | 'uuid';

interface SortKeyPart {
  expr: AnyColumn | SQL;
  type: KeyType;
}

const part = (expr: AnyColumn | SQL, type: KeyType): SortKeyPart => ({ expr, type });

/**
 * The sort keys of each catalogue sort, before the tie-breakers (energy, id). Each list is
 * the leading columns of one index in server/db/schema/catalogue.ts, in the same order.
 * Infinite τ and Q (bound states) and missing dimensions are +Infinity: last ascending,
 * first descending. Arrays compare element by element, so untagged rows come first ascending.
 */
const sortParts: Record<CatalogueSort, SortKeyPart[]> = {
  energy: [],
  width: [part(resonances.width, 'float8')],
  lifetime: [part(nullAsInfinity(resonances.lifetimePs), 'float8')],
  quality: [part(nullAsInfinity(resonances.quality), 'float8')],
  geometry: [
    part(resonances.family, 'text'),
    part(nullAsInfinity(resonances.widthNm), 'float8'),
    part(nullAsInfinity(resonances.heightNm), 'float8'),
    part(nullAsInfinity(resonances.radiusNm), 'float8'),
    part(nullAsInfinity(resonances.lengthNm), 'float8'),
  ],
  model: [part(resonances.modelName, 'text'), part(resonances.modelVersion, 'int4')],
  date: [part(resonances.createdAt, 'timestamptz')],
  tags: [part(resonances.tags, 'text[]')],
  // One dimension each; a row whose family lacks it (+Infinity) comes last ascending.
  'dim.width': [part(nullAsInfinity(resonances.widthNm), 'float8')],
  'dim.height': [part(nullAsInfinity(resonances.heightNm), 'float8')],
  'dim.radius': [part(nullAsInfinity(resonances.radiusNm), 'float8')],
  'dim.length': [part(nullAsInfinity(resonances.lengthNm), 'float8')],
  'dim.rx': [part(nullAsInfinity(resonances.rxNm), 'float8')],
  'dim.ry': [part(nullAsInfinity(resonances.ryNm), 'float8')],
  'dim.inner': [part(nullAsInfinity(resonances.innerNm), 'float8')],
  'dim.outer': [part(nullAsInfinity(resonances.outerNm), 'float8')],
  'dim.area': [part(nullAsInfinity(resonances.areaNm2), 'float8')],
};

/** The name of the index that holds a sort's order (server/db/schema/catalogue.ts): `resonances_group_<sort>_key`. */
export function sortIndexName(sort: CatalogueSort): string {
  return `resonances_group_${sort === 'date' ? 'created' : sort.replace('.', '_')}_key`;
}

/** The full key of a sort: its own columns, then energy and id, so every row has one place and pages never overlap. */
export function sortKey(sort: CatalogueSort): SortKeyPart[] {
  return [...sortParts[sort], part(resonances.energy, 'float8'), part(resonances.id, 'uuid')];
}

/** ORDER BY of a sort: every key part in the same direction, so one index scan (forward or backward) delivers it. */
export function catalogueOrder(sort: CatalogueSort, dir: 'asc' | 'desc'): SQL[] {
  const word = dir === 'asc' ? sql`asc` : sql`desc`;
  return sortKey(sort).map((p) => sql`${p.expr} ${word}`);
}
