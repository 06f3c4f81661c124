import { and, arrayContains, eq, gte, inArray, lte, SQL, sql, type AnyColumn } from 'drizzle-orm';
import { z } from 'zod';
import { nullAsInfinity, resonances } from '../db/schema/catalogue.js';

/**
 * The catalogue filter, as the URL carries it: GET /catalogue?emin=&emax=&tag=…
 * Units: energies and widths in meV, lifetimes in ps, field in T, dimensions in nm.
 * Empty parameters (`emin=`) count as absent so a cleared form field does not filter.
 */

const decimal = /^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/;

/** PostgreSQL text cannot hold U+0000; refused here rather than failing in the database. */
// eslint-disable-next-line no-control-regex -- the pattern exists to find U+0000
export const noNul = /^[^\u0000]*$/;
const noNulMessage = 'must not contain NUL characters';

/** One optional number; a repeated parameter or a non-number is refused with the parameter's name (via validate). */
function numberParam(unit: string) {
  return z.preprocess(
    (v) => (v === undefined || v === '' ? undefined : v),
    z
      .string({ error: 'must be given once, as a number' })
      .trim()
      .regex(decimal, `must be a number (${unit}), e.g. 12.5`)
      .transform(Number)
      .pipe(z.number().refine(Number.isFinite, 'is too large'))
      .optional(),
  );
}

/** A parameter that may repeat (`tag=a&tag=b`) or carry a comma list (`tag=a,b`); empty parts are dropped. */
function listParam(item: z.ZodString) {
  return z.preprocess(
    (v) => {
      if (v === undefined) return undefined;
      const parts = (Array.isArray(v) ? v : [v]).flatMap((s) => (typeof s === 'string' ? s.split(',') : [s]));
      const kept = parts.map((s) => (typeof s === 'string' ? s.trim() : s)).filter((s) => s !== '');
      return kept.length > 0 ? kept : undefined;
    },
    z.array(item).max(20, 'at most 20 values').optional(),
  );
}

function textParam(max: number) {
  return z.preprocess(
    (v) => (v === undefined || (typeof v === 'string' && v.trim() === '') ? undefined : v),
    z
      .string({ error: 'must be given once, as text' })
      .trim()
      .max(max, `must be at most ${max} characters`)
      .regex(noNul, noNulMessage)
      .optional(),
  );
}

function enumParam<T extends readonly [string, ...string[]]>(values: T, fallback: T[number]) {
  return z.preprocess(
    (v) => (v === undefined || v === '' ? undefined : v),
    z.enum(values, { error: `must be one of ${values.join(', ')}` }).default(fallback as never),
  );
}

function intParam(min: number, max: number, fallback: number) {
  return z.preprocess(
    (v) => (v === undefined || v === '' ? undefined : v),
    z
      .string({ error: 'must be given once, as a whole number' })
      .regex(/^\d+$/, 'must be a whole number')
      .transform(Number)
      .pipe(z.number().min(min, `must be at least ${min}`).max(max, `must be at most ${max}`))
      // zod 4 returns a default as the output, unparsed: so it is the number itself.
      .default(fallback as never),
  );
}

const booleanParam = z.preprocess(
  (v) => (v === undefined || v === '' ? undefined : v),
  z
    .enum(['true', 'false', '1', '0'], { error: 'must be true or false' })
    .transform((s) => s === 'true' || s === '1')
    .optional(),
);

export const catalogueSorts = ['energy', 'width', 'lifetime', 'quality', 'geometry', 'model', 'date', 'tags'] as const;
export type CatalogueSort = (typeof catalogueSorts)[number];

/** Range filters: query parameter pair → column. Lower and upper bounds are named for the error message. */
const ranges = {
  energy: { min: 'emin', max: 'emax', unit: 'meV' },
  width: { min: 'gmin', max: 'gmax', unit: 'meV' },
  quality: { min: 'qmin', max: 'qmax', unit: 'no unit' },
  lifetime: { min: 'taumin', max: 'taumax', unit: 'ps' },
  field: { min: 'bmin', max: 'bmax', unit: 'T' },
  dimWidth: { min: 'dim.width.min', max: 'dim.width.max', unit: 'nm' },
  dimHeight: { min: 'dim.height.min', max: 'dim.height.max', unit: 'nm' },
  dimRadius: { min: 'dim.radius.min', max: 'dim.radius.max', unit: 'nm' },
  dimLength: { min: 'dim.length.min', max: 'dim.length.max', unit: 'nm' },
} as const;
type RangeName = keyof typeof ranges;

const rangeShape = Object.fromEntries(
  Object.values(ranges).flatMap((r) => [
    [r.min, numberParam(r.unit)],
    [r.max, numberParam(r.unit)],
  ]),
) as Record<string, ReturnType<typeof numberParam>>;

/** Tags as stored: trimmed, lower-case, 1–40 characters of [a-z0-9-_ .]. Shared with PATCH /resonances/:id. */
export const tagSchema = z
  .string()
  .trim()
  .toLowerCase()
  .min(1, 'a tag must not be empty')
  .max(40, 'a tag has at most 40 characters')
  .regex(/^[a-z0-9\-_ .]+$/, 'a tag may only contain a-z, 0-9, space, "-", "_" and "."');

/** Filters without paging (the exports use this). */
export const catalogueFilterSchema = z
  .object({
    family: listParam(z.string().max(40, 'a family name has at most 40 characters').regex(noNul, noNulMessage)),
    material: listParam(z.string().max(80, 'a material name has at most 80 characters').regex(noNul, noNulMessage)),
    q: textParam(200),
    tag: listParam(tagSchema),
    bound: booleanParam,
    source: z.preprocess(
      (v) => (v === undefined || v === '' ? undefined : v),
      z.enum(['computed', 'fitted'], { error: 'must be computed or fitted' }).optional(),
    ),
    sort: enumParam(catalogueSorts, 'energy'),
    dir: enumParam(['asc', 'desc'] as const, 'asc'),
    ...rangeShape,
  })
  .superRefine((f, ctx) => {
    for (const r of Object.values(ranges)) {
      const lo = (f as Record<string, unknown>)[r.min] as number | undefined;
      const hi = (f as Record<string, unknown>)[r.max] as number | undefined;
      if (lo !== undefined && hi !== undefined && lo > hi) {
        ctx.addIssue({ code: 'custom', path: [r.max], message: `must not be below ${r.min} (${lo})` });
      }
    }
  });

/** Offset paging stops this many rows deep; deeper pages follow the keyset cursor. */
export const maxOffsetRows = 10_000;

export const countKinds = ['estimate', 'exact'] as const;

export const catalogueQuerySchema = z.intersection(
  catalogueFilterSchema,
  z
    .object({
      // No default here: whether `page` was given at all decides between offset and cursor paging.
      page: z.preprocess(
        (v) => (v === undefined || v === '' ? undefined : v),
        z
          .string({ error: 'must be given once, as a whole number' })
          .regex(/^\d+$/, 'must be a whole number')
          .transform(Number)
          .pipe(z.number().min(1, 'must be at least 1').max(1_000_000, 'must be at most 1000000'))
          .optional(),
      ),
      pageSize: intParam(1, 200, 25),
      cursor: z.preprocess(
        (v) => (v === undefined || v === '' ? undefined : v),
        z
          .string({ error: 'must be given once' })
          .max(4000, 'is too long to be a cursor of this API')
          .regex(/^[A-Za-z0-9_-]+$/, 'is not a cursor of this API (take nextCursor or prevCursor from an answer)')
          .optional(),
      ),
      count: enumParam(countKinds, 'estimate'),
    })
    .superRefine((p, ctx) => {
      const page = p.page as number | undefined;
      const size = p.pageSize as number;
      if (page !== undefined && p.cursor !== undefined) {
        ctx.addIssue({ code: 'custom', path: ['page'], message: 'give either page or cursor, not both' });
      } else if (page !== undefined && (page - 1) * size > maxOffsetRows) {
        ctx.addIssue({
          code: 'custom',
          path: ['page'],
          message: `page ${page} starts ${(page - 1) * size} rows deep; numbered pages stop at ${maxOffsetRows} rows, deeper pages follow nextCursor`,
        });
      }
    }),
);

type ParsedFilter = z.infer<typeof catalogueFilterSchema>;

/** The parsed filter in the shape the repository uses. */
export interface CatalogueFilter {
  family?: string[];
  material?: string[];
  q?: string;
  tags?: string[];
  bound?: boolean;
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
  dimWidth: resonances.widthNm,
  dimHeight: resonances.heightNm,
  dimRadius: resonances.radiusNm,
  dimLength: resonances.lengthNm,
};

/**
 * Free text → a prefix tsquery. search_text is to_tsvector('simple', model_name || ' ' || notes):
 * PostgreSQL's default parser splits it into words (hyphenated and underscored words also
 * into their parts), and the 'simple' configuration only lower-cases them (no stemming, no
 * stop words). The user's text is split on white space, tsquery operator characters are
 * removed, and each word becomes `word:*`, all ANDed; to_tsquery then parses each word with
 * the same parser, so "disk-12" matches the way it was indexed.
 */
export function prefixQuery(text: string): string | null {
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
  }
  return and(...conds)!;
}

/** How a sort key's value travels in a cursor, and the SQL type it is compared as. */
export type KeyType = 'float8' | 'int4' | 'text' | 'text[]' | 'timestamptz' | 'uuid';

export interface SortKeyPart {
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
};

/** The full key of a sort: its own columns, then energy and id, so every row has one place and pages never overlap. */
export function sortKey(sort: CatalogueSort): SortKeyPart[] {
  return [...sortParts[sort], part(resonances.energy, 'float8'), part(resonances.id, 'uuid')];
}

/** ORDER BY of a sort: every key part in the same direction, so one index scan (forward or backward) delivers it. */
export function catalogueOrder(sort: CatalogueSort, dir: 'asc' | 'desc'): SQL[] {
  const word = dir === 'asc' ? sql`asc` : sql`desc`;
  return sortKey(sort).map((p) => sql`${p.expr} ${word}`);
}
