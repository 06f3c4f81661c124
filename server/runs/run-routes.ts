import { Router } from 'express';
import { FINISHED_RUN_STATUSES } from '../../shared/api/enums.js';
import {
  cancelRunRoute,
  estimateRunRoute,
  getRunRoute,
  getRunSpectrumRoute,
  launchRunRoute,
  listRunsRoute,
  runEventsRoute,
  type RunProgressEvent,
} from '../../shared/api/runs.js';
import { signedInUser } from '../auth/authenticate.js';
import { clientGone } from '../http/client-gone.js';
import { mountRoute } from '../http/mount-route.js';
import { streamProgress } from '../http/progress-stream.js';
import type { RunEvents } from './run-events.js';
import type { RunService } from './run-service.js';

/** /api/groups/:groupId/runs */
export function runRoutes(runsService: RunService, events: RunEvents | null): Router {
  const router = Router();

  mountRoute(router, estimateRunRoute, ({ body }, req, res) => runsService.estimate(req.membership!.groupId, body, clientGone(res)));

  mountRoute(router, launchRunRoute, ({ body }, req, res) => runsService.create(req.membership!.groupId, signedInUser(req).id, body, clientGone(res)));

  mountRoute(router, listRunsRoute, ({ query }, req) => runsService.list(req.membership!.groupId, query));

  mountRoute(router, getRunRoute, ({ params }, req) => runsService.detail(req.membership!.groupId, params.runId));

  mountRoute(router, getRunSpectrumRoute, ({ params }, req) => runsService.spectrum(req.membership!.groupId, params.runId));

  mountRoute(router, cancelRunRoute, async ({ params }, req) => {
    await runsService.cancel(req.membership!.groupId, signedInUser(req).id, req.membership!.role, params.runId);
    return runsService.view(req.membership!.groupId, params.runId);
  });

  // Server-sent events: the run's status and progress on every change, then `done`.
  mountRoute(router, runEventsRoute, async ({ params }, req, res) => {
    const groupId = req.membership!.groupId;
    const first = await runsService.view(groupId, params.runId);
    streamProgress(req, res, first, {
      read: () => runsService.view(groupId, params.runId),
      progress: (view): RunProgressEvent => ({
        id: view.id,
        status: view.status,
        progress: view.progress,
        attempts: view.attempts,
        error: view.error,
        resonanceCount: view.resonanceCount,
      }),
      finished: (view) => FINISHED_RUN_STATUSES.includes(view.status),
      // Without notifications (no LISTEN connection) the database is read every 2 s.
      subscribe: events ? (onChange) => events.subscribe(params.runId, onChange) : undefined,
      pollMs: events ? undefined : 2000,
    });
  });

  return router;
}
