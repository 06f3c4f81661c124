import { Router } from 'express';
import {
  createFitRoute,
  fitEventsRoute,
  getFitRoute,
  getTraceRoute,
  listFitsRoute,
  listTracesRoute,
  previewTraceRoute,
  uploadTraceRoute,
} from '../../shared/api/fits.js';
import { signedInUser } from '../auth/authenticate.js';
import { mountRoute, withStatus } from '../http/mount-route.js';
import type { RunEvents } from '../runs/run-events.js';
import type { FitService } from './fit-service.js';
import { uploadText } from './fit-service.js';
import { traceUpload } from './trace-upload.js';
import { streamProgress } from '../http/progress-stream.js';

/** How often a fit's event stream reads the row: without notifications, and beside them. */
const FIT_STREAM_POLL_MS = 1000;
const FIT_STREAM_BACKSTOP_MS = 5000;

/** /api/groups/:groupId/traces and /fits — reading: any member; uploading and fitting: designer or reviewer (admin passes). */
export function fitRoutes(fits: FitService, events: RunEvents | null = null): Router {
  const router = Router();

  mountRoute(router, listTracesRoute, (_input, req) => fits.listTraces(req.membership!.groupId));

  mountRoute(router, previewTraceRoute, (_input, req) => fits.preview(uploadText(req.file!.buffer, req.file!.originalname)), { before: [traceUpload()] });

  mountRoute(
    router,
    uploadTraceRoute,
    ({ body: f }, req) => {
      const text = uploadText(req.file!.buffer, req.file!.originalname);
      return fits.createTrace(req.membership!.groupId, signedInUser(req).id, req.file!.originalname.slice(0, 200), text, {
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
    },
    { before: [traceUpload()] },
  );

  mountRoute(router, getTraceRoute, ({ params }, req) => fits.trace(req.membership!.groupId, params.traceId));

  mountRoute(router, listFitsRoute, (_input, req) => fits.list(req.membership!.groupId));

  mountRoute(router, createFitRoute, async ({ body }, req) => {
    const { status, fit } = await fits.create(req.membership!.groupId, signedInUser(req).id, body);
    return withStatus(status, fit);
  });

  mountRoute(router, getFitRoute, ({ params }, req) => fits.detail(req.membership!.groupId, params.fitId));

  // Server-sent events: the fit's status and progress on every change, then `done`.
  mountRoute(router, fitEventsRoute, async ({ params }, req, res) => {
    const groupId = req.membership!.groupId;
    const first = await fits.progress(groupId, params.fitId);
    // Notifications carry each change at once; the slow poll is the backstop for a lost
    // notification, a re-queued fit or an API without the LISTEN connection.
    streamProgress(req, res, first, {
      read: () => fits.progress(groupId, params.fitId),
      progress: (view) => view,
      finished: (view) => view.status === 'completed' || view.status === 'failed',
      subscribe: events ? (onChange) => events.subscribe(params.fitId, onChange) : undefined,
      pollMs: events ? FIT_STREAM_BACKSTOP_MS : FIT_STREAM_POLL_MS,
    });
  });

  return router;
}
