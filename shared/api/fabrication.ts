/**
 * The HTTP contract of fabrication: states and review, comments, the fabrication package,
 * notification settings and catalogue import. The server validates with these schemas and
 * the client takes its types from them (z.infer), so there is one copy.
 */
import * as z from 'zod';
import { noNul } from './catalogue-query.js';
import { FABRICATION_ACTIONS, FABRICATION_STATES } from '../fabrication/fabrication-states.js';
import { declareRoute, json, media } from './route.js';

const text = (max: number, what: string) =>
  z
    .string({ error: `${what} must be text` })
    .trim()
    .min(1, `${what} is empty`)
    .max(max, `${what} must be at most ${max} characters`)
    .regex(noNul, `${what} must not contain NUL characters`);
const positive = (what: string) =>
  z
    .number({ error: `${what} must be a number` })
    .finite(`${what} must be finite`)
    .positive(`${what} must be positive`);
const nonNegative = (what: string) =>
  z
    .number({ error: `${what} must be a number` })
    .finite(`${what} must be finite`)
    .nonnegative(`${what} must not be negative`);

const fabricationStateSchema = z.enum(FABRICATION_STATES);
const fabricationActionSchema = z.enum(FABRICATION_ACTIONS);

/** The tolerances that matter for the device: how far E may be off, and the least Q that still works. */
const tolerancesSchema = z.strictObject({
  energyMeV: positive('energyMeV').nullable().default(null),
  minQuality: positive('minQuality').nullable().default(null),
});

export const transitionBodySchema = z.discriminatedUnion(
  'action',
  [
    z.strictObject({ action: z.literal('propose'), reason: text(2000, 'reason'), tolerances: tolerancesSchema.default({ energyMeV: null, minQuality: null }) }),
    z.strictObject({ action: z.literal('start_review'), reason: text(2000, 'reason').optional() }),
    z.strictObject({ action: z.literal('approve'), reason: text(2000, 'reason') }),
    z.strictObject({ action: z.literal('reject'), reason: text(2000, 'reason') }),
    z.strictObject({ action: z.literal('withdraw'), reason: text(2000, 'reason') }),
    z.strictObject({ action: z.literal('send'), batch: text(200, 'batch'), reason: text(2000, 'reason').optional() }),
    z
      .strictObject({
        action: z.literal('measure'),
        reason: text(2000, 'reason').optional(),
        /** Typed in (meV) with optional standard uncertainties ... */
        energy: positive('energy').optional(),
        width: nonNegative('width').optional(),
        energyUncertainty: nonNegative('energyUncertainty').optional(),
        widthUncertainty: nonNegative('widthUncertainty').optional(),
        /** ... or taken from a completed peak fit of the group (peak index, 0-based). */
        fitId: z.uuid('fitId must be an id').optional(),
        peak: z.number().int().nonnegative().default(0),
      })
      .refine((b) => (b.fitId !== undefined) !== (b.energy !== undefined && b.width !== undefined), {
        message: 'give either fitId (a completed peak fit) or both energy and width (meV)',
      }),
  ],
  { error: `action must be one of ${FABRICATION_ACTIONS.join(', ')}` },
);
export type TransitionBody = z.infer<typeof transitionBodySchema>;

const figureComparisonSchema = z.object({
  predicted: z.number(),
  measured: z.number(),
  difference: z.number(),
  percent: z.number().nullable(),
  uncertainty: z.number().nullable(),
  sigmas: z.number().nullable(),
});

export const measurementSchema = z.object({
  energy: z.number(),
  width: z.number(),
  energyUncertainty: z.number().nullable(),
  widthUncertainty: z.number().nullable(),
  source: z.enum(['typed', 'fit']),
  fitId: z.string().nullable(),
  energyComparison: figureComparisonSchema,
  widthComparison: figureComparisonSchema,
  measuredBy: z.string().nullable(),
  measuredAt: z.string(),
});
export type Measurement = z.infer<typeof measurementSchema>;

const person = z.object({ id: z.string(), name: z.string() }).nullable();

/** A resonance's fabrication record as the API shows it; state null = not proposed. */
export const fabricationRecordSchema = z.object({
  resonanceId: z.string(),
  state: fabricationStateSchema.nullable(),
  reason: z.string().nullable(),
  tolerances: z.object({ energyMeV: z.number().nullable(), minQuality: z.number().nullable() }),
  proposedBy: person,
  proposedAt: z.string().nullable(),
  reviewedBy: person,
  reviewedAt: z.string().nullable(),
  reviewReason: z.string().nullable(),
  batch: z.string().nullable(),
  sentAt: z.string().nullable(),
  measurement: measurementSchema.nullable(),
  updatedAt: z.string().nullable(),
  /** What the caller may do from here (the buttons to show). */
  allowedActions: z.array(fabricationActionSchema),
  history: z.array(
    z.object({
      at: z.string(),
      action: z.string(),
      actor: z.string().nullable(),
      from: z.string().nullable(),
      to: z.string().nullable(),
      reason: z.string().nullable(),
    }),
  ),
});
export type FabricationRecord = z.infer<typeof fabricationRecordSchema>;

/** One row of the review queue and the Fabrication page: the record with the resonance's figures. */
export const fabricationItemSchema = z.object({
  resonanceId: z.string(),
  state: fabricationStateSchema,
  reason: z.string().nullable(),
  tolerances: z.object({ energyMeV: z.number().nullable(), minQuality: z.number().nullable() }),
  proposedBy: person,
  reviewedBy: person,
  reviewReason: z.string().nullable(),
  batch: z.string().nullable(),
  updatedAt: z.string(),
  modelName: z.string(),
  modelVersion: z.number(),
  material: z.string(),
  energy: z.number(),
  width: z.number(),
  lifetimePs: z.number().nullable(),
  quality: z.number().nullable(),
  nearThreshold: z.boolean(),
  overlapping: z.boolean(),
  thumbnailUrl: z.string().nullable(),
  measurement: measurementSchema.nullable(),
  /** Download links when a package exists (approved, sent, measured). */
  downloads: z.object({ archive: z.string(), specSheet: z.string(), gdsii: z.string(), dxf: z.string(), svg: z.string() }).nullable(),
});
export type FabricationItem = z.infer<typeof fabricationItemSchema>;

const fabricationListQuerySchema = z.object({
  state: z
    .string()
    .optional()
    .transform((s, ctx) => {
      if (s === undefined || s === '') return [...FABRICATION_STATES];
      const list = s.split(',').map((x) => x.trim());
      for (const x of list) {
        if (!(FABRICATION_STATES as readonly string[]).includes(x)) {
          ctx.addIssue({ code: 'custom', message: `unknown state '${x}' (expected ${FABRICATION_STATES.join(', ')})` });
          return z.NEVER;
        }
      }
      return list as (typeof FABRICATION_STATES)[number][];
    }),
});
const fabricationListSchema = z.object({ items: z.array(fabricationItemSchema) });

export const commentBodySchema = z.strictObject({
  body: text(4000, 'body'),
  /** Members to notify (user ids); each must belong to the group. */
  mentions: z.array(z.uuid('mentions must be user ids')).max(20, 'at most 20 mentions').default([]),
});
export type CommentBody = z.infer<typeof commentBodySchema>;

export const commentSchema = z.object({
  id: z.string(),
  body: z.string(),
  author: person,
  mentions: z.array(z.object({ id: z.string(), name: z.string() })),
  createdAt: z.string(),
});
export type ResonanceComment = z.infer<typeof commentSchema>;
const commentListSchema = z.object({ items: z.array(commentSchema) });

/** Kinds of e-mail a member can turn off, one by one. */
export const NOTIFICATION_KINDS = ['candidate_proposed', 'candidate_decided', 'fabrication_progress', 'mentioned', 'run_finished'] as const;
export type NotificationKind = (typeof NOTIFICATION_KINDS)[number];
export const NOTIFICATION_KIND_WORDS: Record<NotificationKind, string> = {
  candidate_proposed: 'A candidate is proposed for fabrication (reviewers)',
  candidate_decided: 'My candidate is approved or rejected',
  fabrication_progress: 'A resonance of my group is sent to fabrication or measured',
  mentioned: 'Someone mentions me in a comment',
  run_finished: 'My long run finishes or fails',
};
const notificationKindSchema = z.enum(NOTIFICATION_KINDS);

export const notificationSettingsSchema = z.object({
  kinds: z.array(z.object({ kind: notificationKindSchema, label: z.string(), enabled: z.boolean() })),
});
export type NotificationSettings = z.infer<typeof notificationSettingsSchema>;
/** A partial change: kinds not named keep their setting. */
const notificationSettingsBodySchema = z.strictObject({
  enabled: z.partialRecord(notificationKindSchema, z.boolean({ error: 'must be true or false' })),
});

/** Notifications that could not be sent after every retry, for the group's admins. */
export const failedNotificationSchema = z.object({
  id: z.string(),
  kind: z.string(),
  to: z.string(),
  subject: z.string(),
  attempts: z.number(),
  error: z.string().nullable(),
  createdAt: z.string(),
});
export type FailedNotification = z.infer<typeof failedNotificationSchema>;
const failedNotificationListSchema = z.object({ items: z.array(failedNotificationSchema) });

/** The answer of a catalogue import. */
export const catalogueImportResultSchema = z.object({
  imported: z.number(),
  models: z.number(),
  resonanceIds: z.array(z.string()),
});
export type CatalogueImportResult = z.infer<typeof catalogueImportResultSchema>;

/**
 * A catalogue JSON export (GET /catalogue/export.json) as import reads it: the rows and the
 * model versions they came from. Extra fields (image links) are ignored.
 */
const num = z.number({ error: 'must be a number' }).finite('must be finite');
const exportedRowSchema = z.object({
  id: z.uuid('must be a resonance id'),
  runId: z.uuid().nullable(),
  source: z.enum(['computed', 'fitted'], { error: 'must be computed or fitted' }),
  fitId: z.uuid().nullable(),
  modelId: z.uuid('must be a model id'),
  modelName: z.string().min(1).max(200),
  modelVersion: z.number().int().positive(),
  family: z.string().min(1).max(80),
  keyDimensions: z.record(z.string(), num),
  material: z.string().min(1).max(80),
  fieldT: num,
  energy: num,
  width: num.nonnegative('must not be negative'),
  lifetimePs: num.nullable(),
  quality: num.nullable(),
  partialWidths: z.array(z.object({ lead: z.string().max(80), width: num })).max(64),
  petermann: num.nullable(),
  residual: num.nullable(),
  bound: z.boolean(),
  nearThreshold: z.boolean(),
  overlapping: z.boolean(),
  tags: z.array(z.string().min(1).max(40).regex(noNul)).max(20),
  notes: z.string().max(4000).regex(noNul),
  createdAt: z.string(),
});

export const catalogueExportFileSchema = z.object({
  exportedAt: z.string({ error: 'missing: is this a Poleward catalogue export (JSON)?' }),
  items: z.array(exportedRowSchema, { error: 'missing: is this a Poleward catalogue export (JSON)?' }).max(100_000, 'at most 100,000 resonances per import'),
  models: z
    .array(z.object({ modelId: z.uuid(), name: z.string().min(1).max(200), version: z.number().int().positive(), document: z.unknown() }), {
      error: 'missing: the file was exported before exports carried their models; export it again',
    })
    .max(1000),
});
export type CatalogueExportFile = z.infer<typeof catalogueExportFileSchema>;

// ---------------------------------------------------------------------------------------
// Route declarations (shared/api/route.ts); the handlers are in server/fabrication.

/** Resonance ids are checked by the handler: a malformed one answers 404 like a stranger's. */
const resonanceParams = z.object({ groupId: z.string(), id: z.string() });
const resonanceParamsDoc = z.object({ groupId: z.uuid(), id: z.uuid() });
const groupParamsDoc = z.object({ groupId: z.uuid() });
const download = (mediaType: string, text: string) => media(200, mediaType, text, z.string().meta({ format: 'binary' }));
const packageNote =
  'Only for an approved, sent or measured resonance (409 not_approved otherwise). Any member may download: the viewer role suits a fabrication partner. Each download is recorded in the group activity.';

export const listFabricationRoute = declareRoute({
  id: 'listFabrication',
  method: 'get',
  path: '/groups/{groupId}/fabrication',
  tag: 'fabrication',
  summary: 'Resonances by fabrication state (the review queue, the Fabrication page), newest change first',
  access: 'member',
  query: fabricationListQuerySchema,
  described: { params: groupParamsDoc, query: z.object({ state: z.string().optional().meta({ description: 'Comma-separated states; all when absent' }) }) },
  answer: json(200, 'The records with their figures and downloads', fabricationListSchema),
});

export const getFabricationRoute = declareRoute({
  id: 'getFabrication',
  method: 'get',
  path: '/groups/{groupId}/resonances/{id}/fabrication',
  tag: 'fabrication',
  summary: "A resonance's fabrication record, what the caller may do next, and its history",
  access: 'member',
  params: resonanceParams,
  described: { params: resonanceParamsDoc },
  answer: json(200, 'The record (state null: not proposed)', fabricationRecordSchema),
});

export const moveFabricationRoute = declareRoute({
  id: 'moveFabrication',
  method: 'post',
  path: '/groups/{groupId}/resonances/{id}/fabrication',
  tag: 'fabrication',
  summary: 'Take one step: propose, start_review, approve, reject, withdraw, send, measure',
  access: 'member',
  notes:
    'Who may take which step is decided per action (shared/fabrication/fabrication-states.ts): propose and withdraw need designer; ' +
    'start_review, approve and reject need reviewer and not the proposer; send and measure need designer or reviewer. ' +
    '403 forbidden (role) or own_candidate (the proposer cannot approve their own); 409 illegal_transition says what is allowed from the current state.',
  params: resonanceParams,
  body: transitionBodySchema,
  described: { params: resonanceParamsDoc },
  answer: json(200, 'The record after the step', fabricationRecordSchema),
  errors: { 403: 'forbidden or own_candidate', 409: 'illegal_transition, or fit_not_completed' },
});

export const listCommentsRoute = declareRoute({
  id: 'listComments',
  method: 'get',
  path: '/groups/{groupId}/resonances/{id}/comments',
  tag: 'fabrication',
  summary: 'Comments on a resonance, oldest first',
  access: 'member',
  params: resonanceParams,
  described: { params: resonanceParamsDoc },
  answer: json(200, 'The comments', commentListSchema),
});

export const addCommentRoute = declareRoute({
  id: 'addComment',
  method: 'post',
  path: '/groups/{groupId}/resonances/{id}/comments',
  tag: 'fabrication',
  summary: 'Comment on a resonance; mentioned members get an e-mail',
  access: 'analyst',
  params: resonanceParams,
  body: commentBodySchema,
  described: { params: resonanceParamsDoc },
  answer: json(201, 'The comment', commentSchema),
});

export const PACKAGE_FILES = ['package.zip', 'spec.pdf', 'layout.gds', 'layout.dxf', 'layout.svg'] as const;
export type PackageFile = (typeof PACKAGE_FILES)[number];

const packageFileRoute = <const Id extends string, const File extends PackageFile>(id: Id, file: File, mediaType: string, summary: string) =>
  declareRoute({
    id,
    method: 'get',
    path: `/groups/{groupId}/resonances/{id}/fabrication/${file}`,
    tag: 'fabrication',
    summary,
    access: 'member',
    notes: packageNote,
    params: resonanceParams,
    described: { params: resonanceParamsDoc },
    answer: download(mediaType, summary),
    errors: { 409: 'not_approved' },
  });

export const packageFileRoutes = {
  'package.zip': packageFileRoute(
    'getFabricationPackage',
    'package.zip',
    'application/zip',
    'The fabrication package as one ZIP archive: spec sheet, layout in GDSII, DXF and SVG, README, figures',
  ),
  'spec.pdf': packageFileRoute('getFabricationSpecSheet', 'spec.pdf', 'application/pdf', 'The spec sheet (PDF)'),
  'layout.gds': packageFileRoute(
    'getFabricationGdsii',
    'layout.gds',
    'application/octet-stream',
    'The layout in GDSII (database unit 1 nm, user unit 1 µm; layer map in docs/api.md)',
  ),
  'layout.dxf': packageFileRoute('getFabricationDxf', 'layout.dxf', 'application/dxf', 'The layout in DXF (units nm, one DXF layer per layout layer)'),
  'layout.svg': packageFileRoute('getFabricationSvg', 'layout.svg', 'image/svg+xml', 'The layout in SVG (user units nm, y up as in the model)'),
} as const;

export const listFailedNotificationsRoute = declareRoute({
  id: 'listFailedNotifications',
  method: 'get',
  path: '/groups/{groupId}/notifications/failed',
  tag: 'fabrication',
  summary: 'E-mail notifications of the group that could not be sent after every retry',
  access: 'admin',
  described: { params: groupParamsDoc },
  answer: json(200, 'The failed notifications, newest first', failedNotificationListSchema),
});

export const retryFailedNotificationRoute = declareRoute({
  id: 'retryFailedNotification',
  method: 'post',
  path: '/groups/{groupId}/notifications/{id}/retry',
  tag: 'fabrication',
  summary: 'Send a failed e-mail notification again (after the mail settings were fixed)',
  access: 'admin',
  notes:
    'The notification is queued again with a fresh set of retries; 404 when the group has no such notification, 409 not_failed when it is not marked failed.',
  params: z.object({ groupId: z.uuid(), id: z.uuid({ error: 'must be the id of a notification' }) }),
  described: { params: z.object({ groupId: z.uuid(), id: z.uuid() }) },
  answer: json(200, 'The notification, queued again', z.object({ id: z.string(), status: z.literal('queued') })),
});

export const getNotificationSettingsRoute = declareRoute({
  id: 'getNotificationSettings',
  method: 'get',
  path: '/account/notifications',
  tag: 'account',
  summary: 'Which kinds of e-mail the caller receives',
  access: 'signed-in',
  answer: json(200, 'Every kind with its setting', notificationSettingsSchema),
});

export const setNotificationSettingsRoute = declareRoute({
  id: 'setNotificationSettings',
  method: 'put',
  path: '/account/notifications',
  tag: 'account',
  summary: 'Turn kinds of e-mail on or off (kinds not named keep their setting)',
  access: 'signed-in',
  body: notificationSettingsBodySchema,
  answer: json(200, 'Every kind with its setting', notificationSettingsSchema),
});

export const importCatalogueRoute = declareRoute({
  id: 'importCatalogue',
  method: 'post',
  path: '/groups/{groupId}/catalogue/import',
  tag: 'fabrication',
  summary: 'Import a catalogue JSON export (with its models) into this group; refused whole when anything is invalid',
  access: 'admin',
  described: { params: groupParamsDoc },
  upload: { field: 'file', mediaType: 'application/json', description: 'The file of GET /catalogue/export.json, at most 20 MB.' },
  answer: json(201, 'What was imported', catalogueImportResultSchema),
  errors: { 409: 'already_imported', 413: 'payload_too_large' },
});

export const fabricationRoutes = [
  listFabricationRoute,
  getFabricationRoute,
  moveFabricationRoute,
  listCommentsRoute,
  addCommentRoute,
  ...Object.values(packageFileRoutes),
  listFailedNotificationsRoute,
  retryFailedNotificationRoute,
  getNotificationSettingsRoute,
  setNotificationSettingsRoute,
  importCatalogueRoute,
] as const;
