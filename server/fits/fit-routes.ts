import { Router } from 'express';
import { z } from 'zod';
import { signedInUser } from '../auth/authenticate.js';
import { requireRole } from '../auth/require-role.js';
import { validate } from '../http/validate.js';
import { LINESHAPES } from '../../shared/engine/fit-lineshapes.js';
import { X_UNITS, Y_UNITS } from '../../shared/engine/fit-trace.js';
import type { RunEvents } from '../runs/run-events.js';
import type { FitRequest, FitService } from './fit-service.js';
import { uploadText } from './fit-service.js';
import { traceUpload } from './trace-upload.js';
import { streamProgress } from '../http/progress-stream.js';

const blankIsAbsent = (v: unknown) => (v === '' || v === undefined || v === null ? undefined : v);
const optionalNumber = z.preprocess(blankIsAbsent, z.coerce.number().refine(Number.isFinite, 'must be a number').optional());
// eslint-disable-next-line no-control-regex -- the pattern exists to find U+0000
const noNul = /^[^\u0000]*$/;
/** How often a fit's event stream reads the row: without notifications, and beside them. */
const FIT_STREAM_POLL_MS = 1000;
const FIT_STREAM_BACKSTOP_MS = 5000;

export const traceParams = z.object({ groupId: z.uuid(), traceId: z.uuid() });
export const fitParams = z.object({ groupId: z.uuid(), fitId: z.uuid() });

/** The fields of POST /traces (multipart: strings). */
export const traceFields = z
  .object({
    deviceName: z.string().trim().min(1, 'name the device').max(120).regex(noNul),
    temperatureMK: z.coerce.number().positive('must be above 0 mK').max(1e6, 'must be at most 1e6 mK'),
    notes: z.string().max(2000).regex(noNul).default(''),
    modelId: z.preprocess(blankIsAbsent, z.uuid().optional()),
    x: z.string().trim().min(1, 'choose the x column').max(200),
    y: z.string().trim().min(1, 'choose the y column').max(200),
    xUnit: z.enum(X_UNITS, { error: `must be one of ${X_UNITS.join(', ')}` }),
    yUnit: z.enum(Y_UNITS, { error: `must be one of ${Y_UNITS.join(', ')}` }),
    leverArm: z.preprocess(blankIsAbsent, z.coerce.number().positive('must be above 0 meV/mV').optional()),
    firstLine: z.preprocess(blankIsAbsent, z.coerce.number().int().min(1).optional()),
    lastLine: z.preprocess(blankIsAbsent, z.coerce.number().int().min(1).optional()),
    rangeFrom: optionalNumber,
    rangeTo: optionalNumber,
  })
  .superRefine((f, ctx) => {
    if (f.xUnit === 'mV' && f.leverArm === undefined) ctx.addIssue({ code: 'custom', path: ['leverArm'], message: 'a gate-voltage column needs a lever arm (meV/mV)' });
    if ((f.rangeFrom === undefined) !== (f.rangeTo === undefined)) ctx.addIssue({ code: 'custom', path: ['rangeTo'], message: 'give both ends of the range or neither' });
  });

const finite = z.number().refine(Number.isFinite, 'must be a finite number');

export const fitBody = z.object({
  source: z.discriminatedUnion('kind', [
    z.object({ kind: z.literal('run'), runId: z.uuid(), pair: z.number().int().min(0).default(0), from: finite, to: finite }),
    z.object({ kind: z.literal('trace'), traceId: z.uuid(), from: finite.optional(), to: finite.optional() }),
  ]),
  lineshape: z.enum(LINESHAPES as [string, ...string[]], { error: `must be one of ${LINESHAPES.join(', ')}` }),
  background: z.enum(['constant', 'linear']).default('constant'),
  peaks: z.number().int().min(1).max(10).default(1),
  temperatureMK: z.number().positive().max(1e6).optional(),
  modelId: z.uuid().optional(),
  hints: z.array(z.object({ energy: finite, width: z.number().positive().optional() })).max(10).optional(),
});

/** /api/groups/:groupId/traces and /fits — reading: any member; uploading and fitting: designer or reviewer (admin passes). */
export function fitRoutes(fits: FitService, events: RunEvents | null = null): Router {
  const router = Router({ mergeParams: true });

  router.get('/traces', requireRole(), async (req, res) => {
    res.json(await fits.listTraces(req.membership!.groupId));
  });

  router.post('/traces/preview', requireRole('designer', 'reviewer'), traceUpload(), (req, res) => {
    res.json(fits.preview(uploadText(req.file!.buffer, req.file!.originalname)));
  });

  router.post('/traces', requireRole('designer', 'reviewer'), traceUpload(), validate({ body: traceFields }), async (req, res) => {
    const f = req.valid.body as z.infer<typeof traceFields>;
    const text = uploadText(req.file!.buffer, req.file!.originalname);
    const trace = await fits.createTrace(req.membership!.groupId, signedInUser(req).id, req.file!.originalname.slice(0, 200), text, {
      deviceName: f.deviceName,
      temperatureMK: f.temperatureMK,
      notes: f.notes,
      modelId: f.modelId,
      selection: {
        x: f.x,
        y: f.y,
        xUnit: f.xUnit,
        yUnit: f.yUnit,
        leverArm: f.leverArm,
        firstLine: f.firstLine,
        lastLine: f.lastLine,
        range: f.rangeFrom !== undefined && f.rangeTo !== undefined ? { from: f.rangeFrom, to: f.rangeTo } : undefined,
      },
    });
    res.status(201).json(trace);
  });

  router.get('/traces/:traceId', requireRole(), validate({ params: traceParams }), async (req, res) => {
    const { traceId } = req.valid.params as z.infer<typeof traceParams>;
    res.json(await fits.trace(req.membership!.groupId, traceId));
  });

  router.get('/fits', requireRole(), async (req, res) => {
    res.json(await fits.list(req.membership!.groupId));
  });

  router.post('/fits', requireRole('designer', 'reviewer'), validate({ body: fitBody }), async (req, res) => {
    const { status, fit } = await fits.create(req.membership!.groupId, signedInUser(req).id, req.valid.body as FitRequest);
    res.status(status).json(fit);
  });

  router.get('/fits/:fitId', requireRole(), validate({ params: fitParams }), async (req, res) => {
    const { fitId } = req.valid.params as z.infer<typeof fitParams>;
    res.json(await fits.detail(req.membership!.groupId, fitId));
  });

  // Server-sent events: the fit's status and progress on every change, then `done`.
  router.get('/fits/:fitId/events', requireRole(), validate({ params: fitParams }), async (req, res) => {
    const { fitId } = req.valid.params as z.infer<typeof fitParams>;
    const groupId = req.membership!.groupId;
    const first = await fits.progress(groupId, fitId);
    // Notifications carry each change at once; the slow poll is the backstop for a lost
    // notification, a re-queued fit or an API without the LISTEN connection.
    streamProgress(req, res, first, {
      read: () => fits.progress(groupId, fitId),
      progress: (view) => view,
      finished: (view) => view.status === 'completed' || view.status === 'failed',
      subscribe: events ? (onChange) => events.subscribe(fitId, onChange) : undefined,
      pollMs: events ? FIT_STREAM_BACKSTOP_MS : FIT_STREAM_POLL_MS,
    });
  });

  return router;
}
