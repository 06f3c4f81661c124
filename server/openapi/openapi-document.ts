/**
 * The OpenAPI 3.1 description of /api, generated from the zod schemas the routes
 * validate with (imported, never copied) and the answer schemas in response-schemas.ts.
 * tests/server/openapi.test.ts walks the mounted Express routes and fails on any route
 * missing here, so a new route needs a line in `operations` below.
 */
import { extendZodWithOpenApi, OpenAPIRegistry, OpenApiGeneratorV31, type RouteConfig } from '@asteasolutions/zod-to-openapi';
import { z } from 'zod';
import { backupQuery } from '../backup/backup-routes.js';
import { confirmBody, resetBody, signInBody } from '../auth/auth-routes.js';
import { accountActivityQuery } from '../auth/account-routes.js';
import { createBody as tokenBody, tokenParams as apiTokenParams } from '../auth/api-token-routes.js';
import { catalogueFilterSchema, catalogueQuerySchema } from '../catalogue/catalogue-query.js';
import { imageQuery, labelBody } from '../catalogue/resonance-routes.js';
import { activityQuery, invitationParams, inviteBody, memberParams, roleBody } from '../groups/group-routes.js';
import { acceptBody, tokenParams as invitationTokenParams } from '../invitations/invitation-routes.js';
import { messageParams } from '../mail/outbox-routes.js';
import { bitmapBody, documentBody, listQuery as modelListQuery, modelParams, versionParams } from '../models/model-routes.js';
import { listQuery as runListQuery, runParams } from '../runs/run-routes.js';
import { runRequestSchema } from '../runs/run-window.js';
import { modeMapRequestSchema } from '../modemaps/mode-map-request.js';
import { modeMapPayloadSchema, modeMapViewSchema } from '../modemaps/mode-map-schemas.js';
import { cavityModelDescription } from './cavity-model-description.js';
import * as answers from './response-schemas.js';
import { apiRoutes } from '../../shared/api/routes.js';
import type { Access } from '../../shared/api/enums.js';
import { problemSchema } from '../../shared/api/fields.js';
import { empty as routeEmpty, json as routeJson, media, type Method, type RouteDeclaration } from '../../shared/api/route.js';
import * as fitAnswers from './fit-schemas.js';
import { fitBody, fitParams, traceFields, traceParams } from '../fits/fit-routes.js';

// The generator calls .openapi() on every path and query parameter. zod 4 copies prototype methods
// onto each schema when it is built, so schemas imported above lack it: asParameters clones them.
extendZodWithOpenApi(z);

/** The same fields, rebuilt after the extension; object-level refinements do not matter for parameters. */
function asParameters(o: z.ZodObject): z.ZodObject {
  return z.object(Object.fromEntries(Object.entries(o.shape).map(([k, v]) => [k, (v as z.ZodType).clone()])));
}

// Component names come from zod's own .meta({ id }), which returns a copy: the routes' schemas stay untouched.
const runRequest = runRequestSchema.meta({ id: 'RunRequest' });


const accessText: Record<Access, string> = {
  public: 'Public: no sign-in needed.',
  'signed-in': 'Needs a signed-in user (session cookie, or a personal token as bearer).',
  member: 'Needs membership of the group, any role. Not a member, or no such group: 404.',
  designer: 'Needs the designer role in the group (admin passes every role check). Not a member: 404.',
  analyst: 'Needs the designer role or the reviewer role in the group (admin passes every role check). Not a member: 404.',
  admin: 'Needs the admin role in the group. Not a member: 404.',
  operator: 'Only for the site operator, and only while the local mail stand-in is the transport; 404 otherwise (also to group admins).',
};

interface Answer {
  status: number;
  description: string;
  /** JSON unless `mediaType` says otherwise; none for an empty answer. */
  schema?: z.ZodType;
  mediaType?: string;
}

interface Operation {
  id: string;
  method: Method;
  /** Below /api, with {name} path parameters. */
  path: string;
  tag: string;
  summary: string;
  access: Access;
  notes?: string;
  params?: z.ZodObject;
  query?: z.ZodObject;
  body?: z.ZodType;
  bodyMediaType?: string;
  success: Answer;
  /** Error statuses beyond those the access rule and validation imply. */
  errors?: Record<number, string>;
}

const groupParams = z.object({ groupId: z.uuid() });
// Resonance ids are checked in the route (a malformed one answers 404 like a stranger's).
const resonanceParams = z.object({ groupId: z.uuid(), id: z.uuid() });
// The catalogue query is an intersection (filters, then paging); parameters need one object.
const catalogueParameters = z.object({ ...catalogueQuerySchema.def.left.shape, ...catalogueQuerySchema.def.right.shape });
// The routes accept any JSON as `document` and check it with validateCavityModel; this shows its form.
const modelDocumentBody = documentBody.extend({ document: cavityModelDescription });
const bitmapUpload = bitmapBody.extend({
  file: z.string().meta({ contentMediaType: 'image/png', description: 'The drawing: dark pixels are inside the cavity.' }),
});
const traceUpload = asParameters(traceFields as unknown as z.ZodObject).extend({
  file: z.string().meta({ contentMediaType: 'text/csv', description: 'The trace: CSV or TSV, UTF-8, at most 2 MB.' }),
});
const traceFile = z.object({ file: z.string().meta({ contentMediaType: 'text/csv', description: 'CSV or TSV, UTF-8, at most 2 MB.' }) });
const eventStream = z.string().meta({
  description: 'Server-sent events: `progress` with { id, status, progress, attempts, error, resonanceCount } on every change, then `done` with { status }.',
});

const fitEventStream = z.string().meta({
  description: 'Server-sent events: `progress` with { id, status, progressFraction, attempt, error } on every change, then `done` with { status } (completed or failed).',
});

const json = (status: number, description: string, schema: z.ZodType): Answer => ({ status, description, schema });
const empty = (status: number, description: string): Answer => ({ status, description });

const legacyOperations: Operation[] = [
  { id: 'listTraces', method: 'get', path: '/groups/{groupId}/traces', tag: 'fits', summary: "The group's measured traces, newest first", access: 'member', params: groupParams, success: json(200, 'The traces', z.array(fitAnswers.traceSummarySchema)) },
  {
    id: 'previewTrace',
    method: 'post',
    path: '/groups/{groupId}/traces/preview',
    tag: 'fits',
    summary: 'Columns and first rows of a CSV/TSV file, to choose columns before uploading (stores nothing)',
    access: 'analyst',
    params: groupParams,
    body: traceFile,
    bodyMediaType: 'multipart/form-data',
    success: json(200, 'The preview', fitAnswers.tracePreviewSchema),
    errors: { 413: 'The file is over 2 MB', 415: 'The file is not CSV/TSV text' },
  },
  {
    id: 'uploadTrace',
    method: 'post',
    path: '/groups/{groupId}/traces',
    tag: 'fits',
    summary: 'Upload a measured trace with its columns, units, temperature and device',
    access: 'analyst',
    notes: 'A bad file answers 400 invalid_trace naming the line and the column; nothing is stored.',
    params: groupParams,
    body: traceUpload,
    bodyMediaType: 'multipart/form-data',
    success: json(201, 'The stored trace', fitAnswers.traceDetailSchema),
    errors: { 413: 'The file is over 2 MB', 415: 'The file is not CSV/TSV text' },
  },
  { id: 'getTrace', method: 'get', path: '/groups/{groupId}/traces/{traceId}', tag: 'fits', summary: 'A measured trace with its points (meV, T)', access: 'member', params: traceParams, success: json(200, 'The trace', fitAnswers.traceDetailSchema) },
  { id: 'listFits', method: 'get', path: '/groups/{groupId}/fits', tag: 'fits', summary: "The group's peak fits, newest first", access: 'member', params: groupParams, success: json(200, 'The fits', fitAnswers.fitListSchema) },
  {
    id: 'createFit',
    method: 'post',
    path: '/groups/{groupId}/fits',
    tag: 'fits',
    summary: "Fit peaks to a range of a run's spectrum or to a measured trace",
    access: 'analyst',
    notes: 'Small fits answer 201 completed; larger ones 202 queued (poll getFit for progress).',
    params: groupParams,
    body: fitBody.meta({ id: 'FitRequest' }),
    success: json(201, 'The fit (202 when queued)', fitAnswers.fitDetailSchema),
    errors: { 409: 'The run has no spectrum yet' },
  },
  {
    id: 'fitEvents',
    method: 'get',
    path: '/groups/{groupId}/fits/{fitId}/events',
    tag: 'fits',
    summary: 'Live status and progress of a fit',
    access: 'member',
    params: fitParams,
    success: { status: 200, description: 'An event stream that ends after `done`', schema: fitEventStream, mediaType: 'text/event-stream' },
  },
  { id: 'getFit', method: 'get', path: '/groups/{groupId}/fits/{fitId}', tag: 'fits', summary: 'A fit with its result, comparison and catalogue rows', access: 'member', params: fitParams, success: json(200, 'The fit', fitAnswers.fitDetailSchema) },

  {
    id: 'signIn',
    method: 'post',
    path: '/auth/sign-in',
    tag: 'auth',
    summary: 'Sign in with e-mail and password; sets the pw_session and pw_csrf cookies',
    access: 'public',
    body: signInBody,
    success: json(200, 'Signed in', answers.sessionSchema),
    errors: { 401: 'invalid_credentials', 429: 'rate_limited: too many attempts' },
  },
  {
    id: 'signOut',
    method: 'post',
    path: '/auth/sign-out',
    tag: 'auth',
    summary: 'Sign out: ends the session on the server and clears both cookies',
    access: 'public',
    notes: 'While the session cookie is valid, X-CSRF-Token must match pw_csrf.',
    success: empty(204, 'Signed out'),
    errors: { 403: 'csrf_failed' },
  },
  { id: 'getSession', method: 'get', path: '/auth/session', tag: 'auth', summary: 'Who is signed in, their groups, the CSRF value', access: 'signed-in', success: json(200, 'The session', answers.sessionSchema) },
  {
    id: 'requestPasswordReset',
    method: 'post',
    path: '/auth/password-reset',
    tag: 'auth',
    summary: 'Mail a password-reset link (answers the same whether or not the e-mail has an account)',
    access: 'public',
    body: resetBody,
    success: json(202, 'Accepted', answers.messageSchema),
    errors: { 429: 'rate_limited: too many attempts' },
  },
  {
    id: 'confirmPasswordReset',
    method: 'post',
    path: '/auth/password-reset/confirm',
    tag: 'auth',
    summary: 'Set a new password with the token from the reset link; ends every session and revokes every personal API token of the account',
    access: 'public',
    body: confirmBody,
    success: empty(204, 'Password changed'),
    errors: { 429: 'rate_limited: too many failed attempts from this address' },
  },

  {
    id: 'previewInvitation',
    method: 'get',
    path: '/invitations/{token}',
    tag: 'invitations',
    summary: 'What an invitation link offers',
    access: 'public',
    params: invitationTokenParams,
    success: json(200, 'The invitation', answers.invitationPreviewSchema),
    errors: { 404: 'unknown token', 410: 'invitation_gone: accepted, withdrawn or expired' },
  },
  {
    id: 'acceptInvitation',
    method: 'post',
    path: '/invitations/{token}/accept',
    tag: 'invitations',
    summary: 'Accept an invitation: creates the account (or, for an existing one, checks its password) and signs in',
    access: 'public',
    params: invitationTokenParams,
    body: acceptBody,
    success: json(201, 'Member of the group, signed in', answers.sessionSchema),
    errors: { 401: 'invalid_credentials (existing account)', 404: 'unknown token', 410: 'invitation_gone', 429: 'rate_limited: too many failed attempts from this address' },
  },

  { id: 'listMyGroups', method: 'get', path: '/groups', tag: 'groups', summary: "The caller's groups and roles", access: 'signed-in', success: json(200, 'Groups, by name', z.array(answers.groupOfUserSchema)) },
  { id: 'getGroup', method: 'get', path: '/groups/{groupId}', tag: 'groups', summary: 'One group', access: 'member', params: groupParams, success: json(200, 'The group', answers.groupDetailSchema) },
  { id: 'listMembers', method: 'get', path: '/groups/{groupId}/members', tag: 'groups', summary: 'Members of the group, by name', access: 'member', params: groupParams, success: json(200, 'Members', z.array(answers.memberSchema)) },
  {
    id: 'changeMemberRole',
    method: 'patch',
    path: '/groups/{groupId}/members/{userId}',
    tag: 'groups',
    summary: "Change a member's role",
    access: 'admin',
    params: memberParams,
    body: roleBody,
    success: json(200, 'The updated member', answers.memberSchema),
    errors: { 409: 'last_admin: the group would have no admin' },
  },
  {
    id: 'removeMember',
    method: 'delete',
    path: '/groups/{groupId}/members/{userId}',
    tag: 'groups',
    summary: 'Remove a member from the group',
    access: 'admin',
    params: memberParams,
    success: empty(204, 'Removed'),
    errors: { 409: 'last_admin' },
  },
  { id: 'listInvitations', method: 'get', path: '/groups/{groupId}/invitations', tag: 'groups', summary: 'Open invitations, newest first', access: 'admin', params: groupParams, success: json(200, 'Invitations', z.array(answers.invitationSchema)) },
  {
    id: 'invite',
    method: 'post',
    path: '/groups/{groupId}/invitations',
    tag: 'groups',
    summary: 'Invite someone by e-mail (replaces an open invitation for the same e-mail)',
    access: 'admin',
    params: groupParams,
    body: inviteBody,
    success: json(201, 'Invitation saved and mailed', answers.invitationSchema),
    errors: { 409: 'already_member', 502: 'mail_failed: saved, but the e-mail could not be sent' },
  },
  {
    id: 'revokeInvitation',
    method: 'delete',
    path: '/groups/{groupId}/invitations/{id}',
    tag: 'groups',
    summary: 'Withdraw an invitation (its link then answers 410)',
    access: 'admin',
    params: invitationParams,
    success: empty(204, 'Withdrawn'),
  },
  {
    id: 'groupActivity',
    method: 'get',
    path: '/groups/{groupId}/activity',
    tag: 'groups',
    summary: "The group's audit log, newest first",
    access: 'member',
    params: groupParams,
    query: activityQuery,
    success: json(200, 'Entries', z.array(answers.activityEntrySchema)),
  },

  { id: 'listModels', method: 'get', path: '/groups/{groupId}/models', tag: 'models', summary: 'Cavity models of the group, newest change first', access: 'member', params: groupParams, query: modelListQuery, success: json(200, 'One page of models', answers.modelListSchema) },
  {
    id: 'createModel',
    method: 'post',
    path: '/groups/{groupId}/models',
    tag: 'models',
    summary: 'Create a cavity model (version 1)',
    access: 'designer',
    params: groupParams,
    body: modelDocumentBody,
    success: json(201, 'The new model', answers.modelDetailSchema),
  },
  {
    id: 'checkModel',
    method: 'post',
    path: '/groups/{groupId}/models/validate',
    tag: 'models',
    summary: 'Check a model document and show its derived figures, without saving',
    access: 'member',
    params: groupParams,
    body: modelDocumentBody,
    success: json(200, 'The document is valid', answers.modelCheckSchema),
  },
  {
    id: 'maskFromBitmap',
    method: 'post',
    path: '/groups/{groupId}/models/mask-from-bitmap',
    tag: 'models',
    summary: 'Turn a drawn outline (PNG, at most 8 MB) into a bitmap shape on the lattice',
    access: 'designer',
    params: groupParams,
    body: bitmapUpload,
    bodyMediaType: 'multipart/form-data',
    success: json(200, 'The mask', answers.bitmapMaskSchema),
    errors: { 413: 'payload_too_large (file over 8 MiB) or image_too_large (over 4096×4096 pixels, read from the header)', 415: 'unsupported_media_type: not a PNG' },
  },
  { id: 'getModel', method: 'get', path: '/groups/{groupId}/models/{modelId}', tag: 'models', summary: 'A model: latest document, derived figures, versions', access: 'member', params: modelParams, success: json(200, 'The model', answers.modelDetailSchema) },
  {
    id: 'getModelVersion',
    method: 'get',
    path: '/groups/{groupId}/models/{modelId}/versions/{version}',
    tag: 'models',
    summary: 'One stored version of a model (versions never change)',
    access: 'member',
    params: versionParams,
    success: json(200, 'The version', answers.modelVersionSchema),
  },
  {
    id: 'updateModel',
    method: 'put',
    path: '/groups/{groupId}/models/{modelId}',
    tag: 'models',
    summary: 'Save an edited document as the next version',
    access: 'designer',
    params: modelParams,
    body: modelDocumentBody,
    success: json(200, 'The model with its new version', answers.modelDetailSchema),
  },

  {
    id: 'estimateRun',
    method: 'post',
    path: '/groups/{groupId}/runs/estimate',
    tag: 'runs',
    summary: 'What a pole search or transmission sweep would cost, before launching it',
    access: 'designer',
    params: groupParams,
    body: runRequest,
    success: json(200, 'The estimate', answers.runEstimateSchema),
  },
  {
    id: 'launchRun',
    method: 'post',
    path: '/groups/{groupId}/runs',
    tag: 'runs',
    summary: 'Queue a pole search or transmission sweep on a model version',
    access: 'designer',
    params: groupParams,
    body: runRequest,
    errors: { 422: 'run_too_large: estimated above POLEWARD_RUN_MAX_SECONDS; the message says what to shrink', 429: 'too_many_runs: queued + running runs at the limit; see Retry-After' },
    success: json(201, 'Queued', answers.runSchema),
  },
  { id: 'listRuns', method: 'get', path: '/groups/{groupId}/runs', tag: 'runs', summary: 'Runs of the group, newest first', access: 'member', params: groupParams, query: runListQuery, success: json(200, 'One page of runs', answers.runListSchema) },
  { id: 'getRun', method: 'get', path: '/groups/{groupId}/runs/{runId}', tag: 'runs', summary: 'A run with its poles, thresholds and spectrum', access: 'member', params: runParams, success: json(200, 'The run', answers.runDetailSchema) },
  {
    id: 'getRunSpectrum',
    method: 'get',
    path: '/groups/{groupId}/runs/{runId}/spectrum',
    tag: 'runs',
    summary: 'The transmission spectrum a run computed',
    access: 'member',
    params: runParams,
    success: json(200, 'The spectrum', answers.spectrumSchema),
  },
  {
    id: 'cancelRun',
    method: 'post',
    path: '/groups/{groupId}/runs/{runId}/cancel',
    tag: 'runs',
    summary: 'Cancel a queued or running run',
    access: 'designer',
    notes: 'Only the person who launched it, or a group admin.',
    params: runParams,
    success: json(202, 'Cancellation requested', answers.runSchema),
  },
  {
    id: 'runEvents',
    method: 'get',
    path: '/groups/{groupId}/runs/{runId}/events',
    tag: 'runs',
    summary: 'Live status and progress of a run',
    access: 'member',
    params: runParams,
    success: { status: 200, description: 'An event stream that ends after `done`', schema: eventStream, mediaType: 'text/event-stream' },
  },

  {
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
    query: catalogueParameters,
    success: json(200, 'One page of resonances', answers.cataloguePageSchema),
  },
  {
    id: 'exportCatalogueCsv',
    method: 'get',
    path: '/groups/{groupId}/catalogue/export.csv',
    tag: 'catalogue',
    summary: 'Every resonance the filter keeps, as CSV',
    access: 'member',
    params: groupParams,
    query: catalogueFilterSchema,
    success: { status: 200, description: 'RFC 4180 CSV with a header line', schema: z.string(), mediaType: 'text/csv' },
  },
  {
    id: 'exportCatalogueJson',
    method: 'get',
    path: '/groups/{groupId}/catalogue/export.json',
    tag: 'catalogue',
    summary: 'Every resonance the filter keeps, as JSON with units',
    access: 'member',
    params: groupParams,
    query: catalogueFilterSchema,
    success: json(200, 'The export', answers.catalogueExportSchema),
  },
  {
    id: 'backupGroup',
    method: 'get',
    path: '/groups/{groupId}/backup',
    tag: 'groups',
    summary: "The group's whole data as one archive (gzip'd JSON lines)",
    access: 'admin',
    notes:
      'Models with every version, runs, spectra, resonances with tags and notes, mode vectors and images, and the member list unless members=false. One record per line, header first, `end` with the counts last; see docs/api.md. Streamed from one read-only snapshot.',
    params: groupParams,
    query: backupQuery,
    success: { status: 200, description: 'application/gzip attachment poleward-<slug>-<date>.jsonl.gz', schema: z.string().meta({ format: 'binary' }), mediaType: 'application/gzip' },
  },
  {
    id: 'restoreGroup',
    method: 'post',
    path: '/groups/{groupId}/restore',
    tag: 'groups',
    summary: 'Restore a group backup into this empty group',
    access: 'admin',
    notes:
      'The body is the archive itself (Content-Type application/gzip). Everything is validated before anything is written, then written in one transaction with new ids; a bad archive is refused whole.',
    params: groupParams,
    body: z.string().meta({ format: 'binary' }),
    bodyMediaType: 'application/gzip',
    success: json(201, 'What was restored (record counts)', z.object({ restored: z.record(z.string(), z.number().int()) }).meta({ id: 'RestoreSummary' })),
    errors: {
      400: 'invalid_backup: issues name the line, record type and field',
      409: 'group_not_empty: restore only into a group with no models and no runs',
      413: 'payload_too_large / backup_too_large',
      415: 'unsupported_media_type: send the file with Content-Type application/gzip',
    },
  },
  { id: 'getResonance', method: 'get', path: '/groups/{groupId}/resonances/{id}', tag: 'catalogue', summary: 'A resonance with its run, model, neighbours and leads', access: 'member', params: resonanceParams, success: json(200, 'The resonance', answers.resonanceDetailSchema) },
  {
    id: 'labelResonance',
    method: 'patch',
    path: '/groups/{groupId}/resonances/{id}',
    tag: 'catalogue',
    summary: 'Set the tags and/or notes of a resonance',
    access: 'designer',
    params: resonanceParams,
    body: labelBody,
    success: json(200, 'The updated resonance', answers.resonanceRowSchema),
  },
  {
    id: 'getModeImage',
    method: 'get',
    path: '/groups/{groupId}/resonances/{id}/mode.png',
    tag: 'catalogue',
    summary: 'Picture of the resonance mode |ψ|² (thumbnail or full size)',
    access: 'member',
    notes: 'Answers carry an ETag; send it back in If-None-Match to get 304.',
    params: resonanceParams,
    query: imageQuery,
    success: { status: 200, description: 'PNG', schema: z.string().meta({ contentMediaType: 'image/png' }), mediaType: 'image/png' },
    errors: { 304: 'Not modified: the image behind the ETag you hold is current' },
  },
  {
    id: 'getResonanceCurrent',
    method: 'get',
    path: '/groups/{groupId}/resonances/{id}/current',
    tag: 'catalogue',
    summary: "Probability current of the resonance's mode, as its run stored it, with the mode",
    access: 'member',
    notes: "404 no_current for resonances catalogued before current maps were stored (ask for a map with POST /mode-maps).",
    params: resonanceParams,
    success: json(200, 'The current map', modeMapPayloadSchema),
  },
  {
    id: 'listResonanceModeMaps',
    method: 'get',
    path: '/groups/{groupId}/resonances/{id}/mode-maps',
    tag: 'catalogue',
    summary: 'Maps already asked for this resonance (without their results), newest first',
    access: 'member',
    params: resonanceParams,
    success: json(200, 'The maps', z.object({ items: z.array(modeMapViewSchema) })),
  },
  {
    id: 'createModeMap',
    method: 'post',
    path: '/groups/{groupId}/mode-maps',
    tag: 'catalogue',
    summary: 'Queue a map (current of a scattering state, Husimi map) or get the cached one',
    access: 'member',
    notes: '202 when queued, 200 when the same map (same parameters and engine version) already exists; a failed map is queued again.',
    params: groupParams,
    body: modeMapRequestSchema,
    success: json(202, 'The map, queued', modeMapViewSchema),
    errors: { 503: 'queue_unavailable: this server has no computation queue' },
  },
  {
    id: 'getModeMap',
    method: 'get',
    path: '/groups/{groupId}/mode-maps/{mapId}',
    tag: 'catalogue',
    summary: 'Status, progress and (when completed) the result of a map',
    access: 'member',
    params: z.object({ groupId: z.uuid(), mapId: z.uuid() }),
    success: json(200, 'The map', modeMapViewSchema),
  },

  { id: 'listApiTokens', method: 'get', path: '/tokens', tag: 'tokens', summary: "The caller's active personal API tokens (never the secret)", access: 'signed-in', success: json(200, 'Tokens', z.array(answers.apiTokenSchema)) },
  {
    id: 'createApiToken',
    method: 'post',
    path: '/tokens',
    tag: 'tokens',
    summary: 'Create a personal API token for scripts and notebooks',
    access: 'signed-in',
    body: tokenBody,
    success: json(201, 'The token, with its secret shown this once', answers.createdApiTokenSchema),
  },
  { id: 'revokeApiToken', method: 'delete', path: '/tokens/{id}', tag: 'tokens', summary: 'Revoke a personal API token', access: 'signed-in', params: apiTokenParams, success: empty(204, 'Revoked') },

  {
    id: 'listAccountActivity',
    method: 'get',
    path: '/account/activity',
    tag: 'account',
    summary: "Audit entries about the caller's own account, newest first",
    access: 'signed-in',
    notes: 'Sign-ins and failed ones, sign-outs, rate-limit and CSRF refusals, password resets, tokens, role changes, and reads of mail addressed to the account.',
    query: accountActivityQuery,
    success: json(200, 'Entries', z.array(answers.activityEntrySchema)),
  },

  { id: 'listOutbox', method: 'get', path: '/outbox', tag: 'outbox', summary: 'Latest 100 messages the local mail stand-in received (no bodies; recorded)', access: 'operator', success: json(200, 'Messages, newest first', z.array(answers.outboxSummarySchema)) },
  { id: 'getOutboxMessage', method: 'get', path: '/outbox/{id}', tag: 'outbox', summary: 'One received message, with its body (each read recorded, and shown to the recipient)', access: 'operator', params: messageParams, success: json(200, 'The message', answers.outboxMessageSchema) },
];


/** A route of the old table as a declaration (until every route is declared in shared/api). */
function fromLegacy(op: Operation): RouteDeclaration {
  const nonJsonBody = op.bodyMediaType !== undefined && op.bodyMediaType !== 'application/json';
  const s = op.success;
  return {
    id: op.id,
    method: op.method,
    path: op.path,
    tag: op.tag,
    summary: op.summary,
    access: op.access,
    ...(op.notes ? { notes: op.notes } : {}),
    ...(op.params ? { params: op.params } : {}),
    ...(op.query ? { query: op.query } : {}),
    ...(op.body && !nonJsonBody ? { body: op.body } : {}),
    ...(nonJsonBody ? { rawBody: { mediaType: op.bodyMediaType!, description: '' }, described: { body: op.body } } : {}),
    ...(op.errors ? { errors: op.errors } : {}),
    answer: !s.schema ? routeEmpty(s.status, s.description) : s.mediaType ? media(s.status, s.mediaType, s.description, s.schema) : routeJson(s.status, s.description, s.schema),
  };
}

/** Every route the document describes: the declared ones and the rest of the old table. */
const routes: RouteDeclaration[] = [...apiRoutes, ...legacyOperations.map(fromLegacy)];

const problemContent = { 'application/json': { schema: problemSchema } };

/** Error answers every route of this access level and input can give, plus the route's own. */
export function errorAnswers(op: RouteDeclaration): Record<number, string> {
  const out: Record<number, string> = {};
  if (op.params || op.query || op.body) out[400] = 'validation_failed: see issues';
  if (op.access !== 'public') out[401] = 'unauthenticated: not signed in, session expired, or unknown API token';
  if (op.method !== 'get' && op.access !== 'public') out[403] = 'csrf_failed: cookie request without a matching X-CSRF-Token';
  if (op.access === 'designer' || op.access === 'admin' || op.access === 'analyst') out[403] = 'forbidden: the role is missing; or csrf_failed';
  if (op.access === 'member' || op.access === 'designer' || op.access === 'admin' || op.access === 'analyst' || op.access === 'operator' || op.params) {
    out[404] = 'not_found (also for objects of a group you are not in)';
  }
  return { ...out, ...op.errors };
}

/** The request body as the document shows it: JSON, multipart with the file, or the file itself. */
function requestBody(op: RouteDeclaration): { mediaType: string; schema: z.ZodType } | null {
  if (op.upload) {
    const fields = (op.described?.body ?? op.body) as z.ZodObject | undefined;
    const file = z.string().meta({ contentMediaType: op.upload.mediaType, description: op.upload.description });
    return { mediaType: 'multipart/form-data', schema: (fields ? asParameters(fields) : z.object({})).extend({ [op.upload.field]: file }) };
  }
  if (op.rawBody) {
    return { mediaType: op.rawBody.mediaType, schema: op.described?.body ?? z.string().meta({ format: 'binary', description: op.rawBody.description }) };
  }
  const body = op.described?.body ?? op.body;
  return body ? { mediaType: 'application/json', schema: body } : null;
}

function routeConfig(op: RouteDeclaration): RouteConfig {
  const a = op.answer;
  const responses: RouteConfig['responses'] = {
    [a.status]: {
      description: a.description,
      ...(a.kind === 'empty' ? {} : { content: { [a.kind === 'media' ? a.mediaType : 'application/json']: { schema: a.schema } } }),
    },
  };
  for (const [status, description] of Object.entries(errorAnswers(op))) {
    responses[status] = Number(status) === 304 ? { description } : { description, content: problemContent };
  }
  responses.default = { description: 'Any other error, as a problem (429 rate_limited, 413 payload_too_large, 500 internal...)', content: problemContent };
  const params = op.described?.params ?? (op.params as z.ZodObject | undefined);
  const query = op.described?.query ?? (op.query as z.ZodObject | undefined);
  const body = requestBody(op);

  return {
    method: op.method,
    path: `/api${op.path}`,
    operationId: op.id,
    tags: [op.tag],
    summary: op.summary,
    description: [accessText[op.access], op.notes].filter(Boolean).join(' '),
    security:
      op.access === 'public'
        ? []
        : op.method !== 'get'
          ? [{ sessionCookie: [], csrfHeader: [] }, { personalToken: [] }]
          : [{ sessionCookie: [] }, { personalToken: [] }],
    request: {
      ...(params ? { params: asParameters(params) } : {}),
      ...(query ? { query: asParameters(query) } : {}),
      ...(body ? { body: { required: true, content: { [body.mediaType]: { schema: body.schema } } } } : {}),
    },
    responses,
  };
}

/** Method, path (OpenAPI spelling, with /api) and access rule of every described route; the tests compare them with Express. */
export const describedRoutes: readonly { method: Method; path: string; access: Access }[] = routes.map((op) => ({
  method: op.method,
  path: `/api${op.path}`,
  access: op.access,
}));

/** Builds the whole document. Pure; about 0.1 s on this machine, so the route builds it once per process. */
export function buildOpenApiDocument(version: string): ReturnType<OpenApiGeneratorV31['generateDocument']> {
  const registry = new OpenAPIRegistry();
  registry.registerComponent('securitySchemes', 'sessionCookie', {
    type: 'apiKey',
    in: 'cookie',
    name: 'pw_session',
    description: 'Set by POST /api/auth/sign-in (HttpOnly, 12 hours). Unsafe methods also need csrfHeader.',
  });
  registry.registerComponent('securitySchemes', 'csrfHeader', {
    type: 'apiKey',
    in: 'header',
    name: 'X-CSRF-Token',
    description: 'The pw_csrf cookie value (also Session.csrfToken), repeated on POST, PUT, PATCH and DELETE made with the session cookie.',
  });
  registry.registerComponent('securitySchemes', 'personalToken', {
    type: 'http',
    scheme: 'bearer',
    description: 'A personal API token (pwt_…) from POST /api/tokens; no CSRF header needed.',
  });
  for (const op of routes) registry.registerPath(routeConfig(op));

  return new OpenApiGeneratorV31(registry.definitions).generateDocument({
    openapi: '3.1.0',
    info: {
      title: 'Poleward API',
      version,
      description:
        'Finds and catalogues the resonances z = E − iΓ/2 of open cavities. Energies and widths in meV, lifetimes in ps, ' +
        'lengths in nm, field in T. Errors are JSON problems { status, code, message, issues? }. Objects of a group you ' +
        'are not a member of answer 404, exactly like missing ones. See docs/api.md.',
    },
    security: [{ sessionCookie: [] }, { personalToken: [] }],
    tags: [
      { name: 'meta' },
      { name: 'auth', description: 'Sign-in, session, password reset' },
      { name: 'invitations', description: 'The public side of invitation links' },
      { name: 'groups', description: 'Groups, members, invitations, activity' },
      { name: 'models', description: 'Versioned cavity models' },
      { name: 'runs', description: 'Pole searches and transmission sweeps' },
      { name: 'catalogue', description: 'The resonance catalogue' },
      { name: 'tokens', description: 'Personal API tokens' },
      { name: 'account', description: "The caller's own account: its activity" },
      { name: 'outbox', description: 'The local mail stand-in' },
    ],
  });
}
