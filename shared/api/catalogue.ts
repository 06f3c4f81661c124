/** The resonance catalogue: search, exports, one resonance with its labels and mode image. */
import * as z from 'zod';
import { catalogueFilterFields, catalogueFilterSchema, catalogueQuerySchema, noNul, tagSchema } from './catalogue-query.js';
import { runKindSchema, runStatusSchema } from './enums.js';
import { groupParams, timestamp } from './fields.js';
import { resonanceRowSchema } from './resonance-row.js';
import { declareRoute, json, media } from './route.js';
import { runCertificateSchema, runLeadSchema } from './runs.js';

export const TOTAL_KINDS = ['exact', 'cached', 'estimated'] as const;
export type TotalKind = (typeof TOTAL_KINDS)[number];

export const cataloguePageSchema = z
  .object({
    items: z.array(resonanceRowSchema),
    total: z.number().int().nonnegative().meta({ description: 'Number of matches, obtained as totalKind says' }),
    totalKind: z.enum(TOTAL_KINDS).meta({
      description:
        "exact: the number of matches now (counted for this answer, or at countedAt with no change to the group's resonances since); " +
        "cached: counted countAgeSeconds ago, before the group's rows last changed; estimated: the database planner's estimate (ask count=exact)",
    }),
    countedAt: timestamp().nullable().meta({ description: 'When the count was taken; null for an estimate' }),
    countAgeSeconds: z.number().int().nonnegative().nullable(),
    page: z.number().int().min(1).meta({ description: 'Page number: exact with page=, carried as a label by cursors' }),
    pageSize: z.number().int(),
    nextCursor: z.string().nullable().meta({ description: 'Opaque cursor of the next page (pass as cursor=); null on the last page' }),
    prevCursor: z.string().nullable().meta({ description: 'Opaque cursor of the previous page; null on the first page' }),
  })
  .meta({ id: 'CataloguePage' });
export type CataloguePage = z.infer<typeof cataloguePageSchema>;

export const resonanceDetailSchema = resonanceRowSchema
  .extend({
    run: z
      .object({
        id: z.uuid(),
        kind: runKindSchema,
        window: z.record(z.string(), z.number()),
        certificate: runCertificateSchema.nullable(),
        status: runStatusSchema,
      })
      .nullable()
      .meta({ description: 'The run that found the pole; null for a fitted resonance' }),
    model: z.object({ id: z.uuid(), name: z.string(), version: z.number().int() }),
    otherPoles: z.array(z.object({ id: z.uuid(), energy: z.number(), width: z.number() })),
    thresholds: z.array(z.number()).meta({ description: 'Channel thresholds in the run window (meV)' }),
    leads: z.array(runLeadSchema),
  })
  .meta({ id: 'ResonanceDetail' });
export type ResonanceDetail = z.infer<typeof resonanceDetailSchema>;

export const catalogueExportSchema = z
  .object({
    exportedAt: timestamp(),
    units: z.record(z.string(), z.string()),
    items: z.array(resonanceRowSchema),
    /** The model versions the items came from, so POST /catalogue/import can rebuild them in another group. */
    models: z.array(z.object({ modelId: z.uuid(), name: z.string(), version: z.number().int(), document: z.unknown() })),
  })
  .meta({ id: 'CatalogueExport' });
export type CatalogueExport = z.infer<typeof catalogueExportSchema>;

export const labelBody = z
  .strictObject({
    tags: z
      .array(tagSchema, { error: 'must be a list of tags' })
      .max(20, 'at most 20 tags')
      .transform((tags) => [...new Set(tags)])
      .optional(),
    notes: z.string({ error: 'must be text' }).max(4000, 'must be at most 4000 characters').regex(noNul, 'must not contain NUL characters').optional(),
  })
  .refine((b) => b.tags !== undefined || b.notes !== undefined, { message: 'send tags, notes or both' });

export const imageQuery = z.object({
  size: z.enum(['thumb', 'full'], { error: 'must be thumb or full' }).default('thumb'),
});

/**
 * A malformed resonance id answers 404 like any stranger's (the handler checks it), not 400:
 * so the id is a plain string to validation and a uuid to the document.
 */
export const resonanceParams = z.object({ groupId: z.uuid(), id: z.string().meta({ format: 'uuid' }) });

/** The catalogue query is an intersection (filters, then paging); the document needs one object of parameters. */
// The filter is a record check piped into its fields (so an unknown dim.NAME is named); parameters need one object.
const catalogueParameters = z.object({ ...catalogueFilterFields.shape, ...catalogueQuerySchema.def.right.shape });
const filterParameters = z.object({ ...catalogueFilterFields.shape });

export const searchCatalogueRoute = declareRoute({
  id: 'searchCatalogue',
  method: 'get',
  path: '/groups/{groupId}/catalogue',
  tag: 'catalogue',
  summary: "Filter, sort and page the group's resonances",
  access: 'member',
  notes:
    'List parameters (family, material, tag) repeat or take a comma list; empty parameters count as absent. ' +
    'Pages: page= (numbered, up to 10,000 rows deep) or cursor= (nextCursor/prevCursor of an answer, any depth). ' +
    'The total is exact, cached (with its age) or estimated, as totalKind says; count=exact counts now.',
  params: groupParams,
  query: catalogueQuerySchema,
  described: { query: catalogueParameters },
  answer: json(200, 'One page of resonances', cataloguePageSchema),
});

export const exportCatalogueCsvRoute = declareRoute({
  id: 'exportCatalogueCsv',
  method: 'get',
  path: '/groups/{groupId}/catalogue/export.csv',
  tag: 'catalogue',
  summary: 'Every resonance the filter keeps, as CSV',
  access: 'member',
  params: groupParams,
  query: catalogueFilterSchema,
  described: { query: filterParameters },
  answer: media(200, 'text/csv', 'RFC 4180 CSV with a header line', z.string()),
});

export const exportCatalogueJsonRoute = declareRoute({
  id: 'exportCatalogueJson',
  method: 'get',
  path: '/groups/{groupId}/catalogue/export.json',
  tag: 'catalogue',
  summary: 'Every resonance the filter keeps, as JSON with units',
  access: 'member',
  notes: 'Streamed in batches, so a large catalogue never sits in memory whole.',
  params: groupParams,
  query: catalogueFilterSchema,
  described: { query: filterParameters },
  // Streamed by the handler (not checked as one value); the OpenAPI test checks its form.
  answer: media(200, 'application/json', 'The export', catalogueExportSchema),
});

export const getResonanceRoute = declareRoute({
  id: 'getResonance',
  method: 'get',
  path: '/groups/{groupId}/resonances/{id}',
  tag: 'catalogue',
  summary: 'A resonance with its run, model, neighbours and leads',
  access: 'member',
  params: resonanceParams,
  answer: json(200, 'The resonance', resonanceDetailSchema),
});

export const labelResonanceRoute = declareRoute({
  id: 'labelResonance',
  method: 'patch',
  path: '/groups/{groupId}/resonances/{id}',
  tag: 'catalogue',
  summary: 'Set the tags and/or notes of a resonance',
  access: 'designer',
  params: resonanceParams,
  body: labelBody,
  answer: json(200, 'The updated resonance', resonanceRowSchema),
});

export const modeImageRoute = declareRoute({
  id: 'getModeImage',
  method: 'get',
  path: '/groups/{groupId}/resonances/{id}/mode.png',
  tag: 'catalogue',
  summary: 'Picture of the resonance mode |ψ|² (thumbnail or full size)',
  access: 'member',
  notes: 'Answers carry an ETag; send it back in If-None-Match to get 304.',
  params: resonanceParams,
  query: imageQuery,
  answer: media(200, 'image/png', 'PNG', z.string().meta({ contentMediaType: 'image/png' })),
  errors: { 304: 'Not modified: the image behind the ETag you hold is current' },
});
