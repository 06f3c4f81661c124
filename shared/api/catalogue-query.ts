/**
 * The catalogue filter, as the URL carries it: GET /catalogue?emin=&emax=&tag=…
 * Units: energies and widths in meV, lifetimes in ps, field in T, dimensions in nm.
 * Empty parameters (`emin=`) count as absent so a cleared form field does not filter.
 */
import * as z from 'zod';

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
  return z.preprocess((v) => {
    if (v === undefined) return undefined;
    const parts = (Array.isArray(v) ? v : [v]).flatMap((s) => (typeof s === 'string' ? s.split(',') : [s]));
    const kept = parts.map((s) => (typeof s === 'string' ? s.trim() : s)).filter((s) => s !== '');
    return kept.length > 0 ? kept : undefined;
  }, z.array(item).max(20, 'at most 20 values').optional());
}

function textParam(max: number) {
  return z.preprocess(
    (v) => (v === undefined || (typeof v === 'string' && v.trim() === '') ? undefined : v),
    z.string({ error: 'must be given once, as text' }).trim().max(max, `must be at most ${max} characters`).regex(noNul, noNulMessage).optional(),
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

/** The geometry dimensions one can sort by (`sort=dim.rx`), the same names as the dimension filters. */
const dimensionSorts = ['dim.width', 'dim.height', 'dim.radius', 'dim.length', 'dim.rx', 'dim.ry', 'dim.inner', 'dim.outer', 'dim.area'] as const;

export const catalogueSorts = ['energy', 'width', 'lifetime', 'quality', 'geometry', 'model', 'date', 'tags', ...dimensionSorts] as const;
export type CatalogueSort = (typeof catalogueSorts)[number];

/** Range filters: query parameter pair → column. Lower and upper bounds are named for the error message. */
export const CATALOGUE_RANGES = {
  energy: { min: 'emin', max: 'emax', unit: 'meV' },
  width: { min: 'gmin', max: 'gmax', unit: 'meV' },
  quality: { min: 'qmin', max: 'qmax', unit: 'no unit' },
  lifetime: { min: 'taumin', max: 'taumax', unit: 'ps' },
  field: { min: 'bmin', max: 'bmax', unit: 'T' },
  dimWidth: { min: 'dim.width.min', max: 'dim.width.max', unit: 'nm' },
  dimHeight: { min: 'dim.height.min', max: 'dim.height.max', unit: 'nm' },
  dimRadius: { min: 'dim.radius.min', max: 'dim.radius.max', unit: 'nm' },
  dimLength: { min: 'dim.length.min', max: 'dim.length.max', unit: 'nm' },
  dimRx: { min: 'dim.rx.min', max: 'dim.rx.max', unit: 'nm' },
  dimRy: { min: 'dim.ry.min', max: 'dim.ry.max', unit: 'nm' },
  dimInner: { min: 'dim.inner.min', max: 'dim.inner.max', unit: 'nm' },
  dimOuter: { min: 'dim.outer.min', max: 'dim.outer.max', unit: 'nm' },
  dimArea: { min: 'dim.area.min', max: 'dim.area.max', unit: 'nm²' },
  frequency: { min: 'fmin', max: 'fmax', unit: 'GHz' },
  wavelength: { min: 'lambdamin', max: 'lambdamax', unit: 'lattice spacings' },
} as const;
export type RangeName = keyof typeof CATALOGUE_RANGES;

/** The dimension names `dim.NAME.min/max` accepts (server/models/model-figures.ts, GeometryColumns). */
const dimensionFilterNames = Object.values(CATALOGUE_RANGES)
  .map((r) => /^dim\.(\w+)\.min$/.exec(r.min)?.[1])
  .filter((n): n is string => n !== undefined);

const rangeShape = Object.fromEntries(
  Object.values(CATALOGUE_RANGES).flatMap((r) => [
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
/** The filter's parameters, one by one (the OpenAPI document lists them from here). */
export const catalogueFilterFields = z
  .object({
    family: listParam(z.string().max(40, 'a family name has at most 40 characters').regex(noNul, noNulMessage)),
    material: listParam(z.string().max(80, 'a material name has at most 80 characters').regex(noNul, noNulMessage)),
    q: textParam(200),
    tag: listParam(tagSchema),
    bound: booleanParam,
    /** true: only resonances above their model's lattice-validity limit; false: only those within it. */
    aboveLimit: booleanParam,
    physics: listParam(z.enum(['electrons', 'microwave'], { error: 'must be electrons or microwave' }) as unknown as z.ZodString),
    source: z.preprocess(
      (v) => (v === undefined || v === '' ? undefined : v),
      z.enum(['computed', 'fitted'], { error: 'must be computed or fitted' }).optional(),
    ),
    sort: enumParam(catalogueSorts, 'energy'),
    dir: enumParam(['asc', 'desc'] as const, 'asc'),
    ...rangeShape,
  })
  .superRefine((f, ctx) => {
    for (const r of Object.values(CATALOGUE_RANGES)) {
      const lo = (f as Record<string, unknown>)[r.min] as number | undefined;
      const hi = (f as Record<string, unknown>)[r.max] as number | undefined;
      if (lo !== undefined && hi !== undefined && lo > hi) {
        ctx.addIssue({ code: 'custom', path: [r.max], message: `must not be below ${r.min} (${lo})` });
      }
    }
  });

export const catalogueFilterSchema = z
  .record(z.string(), z.unknown())
  // Names an unknown dimension (dim.xyz.min) instead of dropping it as an unknown key.
  .superRefine((raw, ctx) => {
    for (const key of Object.keys(raw)) {
      if (!key.startsWith('dim.')) continue;
      const m = /^dim\.([^.]*)\.(min|max)$/.exec(key);
      if (!m || !dimensionFilterNames.includes(m[1]!)) {
        ctx.addIssue({
          code: 'custom',
          path: [key],
          message: `is not a dimension filter: use dim.NAME.min or dim.NAME.max with NAME one of ${dimensionFilterNames.join(', ')}`,
        });
      }
    }
  })
  .pipe(catalogueFilterFields);

/** Offset paging stops this many rows deep; deeper pages follow the keyset cursor. */
const maxOffsetRows = 10_000;

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
