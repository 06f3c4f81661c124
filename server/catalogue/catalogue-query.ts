import { and, arrayContains, asc, desc, eq, gte, inArray, isNull, lte, or, sql, type AnyColumn, type SQL } from 'drizzle-orm';
import { z } from 'zod';
import { resonances } from '../db/schema/catalogue.js';

/**
 * The catalogue filter, as the URL carries it: GET /catalogue?emin=&emax=&tag=…
 * Units: energies and widths in meV, lifetimes in ps, field in T, dimensions in nm.
 * Empty parameters (`emin=`) count as absent so a cleared form field does not filter.
 */

const decimal = /^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/;

/** PostgreSQL text cannot hold U+0000; refused here rather than failing in the database. */
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

export const catalogueQuerySchema = z.intersection(
  catalogueFilterSchema,
  z.object({ page: intParam(1, 1_000_000, 1), pageSize: intParam(1, 200, 25) }),
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
  page: number;
  pageSize: number;
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
  return { ...toCatalogueFilter(parsed as ParsedFilter), page: parsed.page as number, pageSize: parsed.pageSize as number };
}

const rangeColumns: Record<RangeName, AnyColumn> = {
  energy: resonances.energy,
  width: resonances.width,
  quality: resonances.quality,
  lifetime: resonances.lifetimePs,
  field: resonances.fieldT,
  dimWidth: resonances.widthNm,
  dimHeight: resonances.heightNm,
  dimRadius: resonances.radiusNm,
  dimLength: resonances.lengthNm,
};

/** Null lifetime and Q mean infinite (bound states): a lower bound keeps them, an upper bound drops them. */
const nullMeansInfinite = new Set<RangeName>(['quality', 'lifetime']);

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
    if (r.min !== undefined) {
      conds.push(nullMeansInfinite.has(name) ? or(gte(col, r.min), isNull(col))! : gte(col, r.min));
    }
    if (r.max !== undefined) conds.push(lte(col, r.max));
  }
  return and(...conds)!;
}

const sortColumns: Record<CatalogueSort, AnyColumn[]> = {
  energy: [resonances.energy],
  width: [resonances.width],
  // PostgreSQL puts nulls last ascending and first descending: exactly where infinite τ and Q belong.
  lifetime: [resonances.lifetimePs],
  quality: [resonances.quality],
  geometry: [resonances.family, resonances.widthNm, resonances.heightNm, resonances.radiusNm, resonances.lengthNm],
  model: [resonances.modelName, resonances.modelVersion],
  date: [resonances.createdAt],
  // Arrays compare element by element, so untagged rows come first ascending.
  tags: [resonances.tags],
};

/** ORDER BY of a sort, with energy and then id as tie-breakers so pages never overlap. */
export function catalogueOrder(sort: CatalogueSort, dir: 'asc' | 'desc'): SQL[] {
  const by = dir === 'asc' ? asc : desc;
  const cols = [...sortColumns[sort]];
  if (sort !== 'energy') cols.push(resonances.energy);
  return [
    ...cols.map((c) =>
      // The index is (group_id, created_at DESC NULLS LAST); PostgreSQL's default DESC is NULLS
      // FIRST and it will not use the index for a different null order, even on a NOT NULL column.
      c === resonances.createdAt ? (dir === 'asc' ? sql`${c} asc nulls first` : sql`${c} desc nulls last`) : by(c),
    ),
    by(resonances.id),
  ];
}
