import { Router } from 'express';
import { z } from 'zod';
import { signedInUser } from '../auth/authenticate.js';
import { requireRole } from '../auth/require-role.js';
import { clientGone } from '../http/client-gone.js';
import { validate } from '../http/validate.js';
import { RUN_KINDS } from '../jobs/queues.js';
import type { RunEvents } from './run-events.js';
import type { RunService } from './run-service.js';
import { runRequestSchema, type RunRequest } from './run-window.js';
import { streamProgress } from '../http/progress-stream.js';

export const listQuery = z.object({
  status: z.enum(['queued', 'running', 'completed', 'failed', 'cancelled']).optional(),
  kind: z.enum(RUN_KINDS as [string, ...string[]]).optional(),
  modelId: z.uuid().optional(),
  page: z.coerce.number().int().min(1).default(1),
  pageSize: z.coerce.number().int().min(1).max(200).default(25),
});
export const runParams = z.object({ groupId: z.uuid(), runId: z.uuid() });
const TERMINAL = new Set(['completed', 'failed', 'cancelled']);

/** /api/groups/:groupId/runs */
export function runRoutes(runsService: RunService, events: RunEvents | null): Router {
  const router = Router({ mergeParams: true });

  router.post('/estimate', requireRole('designer'), validate({ body: runRequestSchema }), async (req, res) => {
    res.json(await runsService.estimate(req.membership!.groupId, req.valid.body as RunRequest, clientGone(res)));
  });

  router.post('/', requireRole('designer'), validate({ body: runRequestSchema }), async (req, res) => {
    res.status(201).json(await runsService.create(req.membership!.groupId, signedInUser(req).id, req.valid.body as RunRequest, clientGone(res)));
  });

  router.get('/', requireRole(), validate({ query: listQuery }), async (req, res) => {
    res.json(await runsService.list(req.membership!.groupId, req.valid.query as z.infer<typeof listQuery> as never));
  });

  router.get('/:runId', requireRole(), validate({ params: runParams }), async (req, res) => {
    const { runId } = req.valid.params as z.infer<typeof runParams>;
    res.json(await runsService.detail(req.membership!.groupId, runId));
  });

  router.get('/:runId/spectrum', requireRole(), validate({ params: runParams }), async (req, res) => {
    const { runId } = req.valid.params as z.infer<typeof runParams>;
    res.json(await runsService.spectrum(req.membership!.groupId, runId));
  });

  router.post('/:runId/cancel', requireRole('designer'), validate({ params: runParams }), async (req, res) => {
    const { runId } = req.valid.params as z.infer<typeof runParams>;
    await runsService.cancel(req.membership!.groupId, signedInUser(req).id, req.membership!.role, runId);
    res.status(202).json(await runsService.view(req.membership!.groupId, runId));
  });

  // Server-sent events: the run's status and progress on every change, then `done`.
  router.get('/:runId/events', requireRole(), validate({ params: runParams }), async (req, res) => {
    const { runId } = req.valid.params as z.infer<typeof runParams>;
    const groupId = req.membership!.groupId;
    const first = await runsService.view(groupId, runId);
    streamProgress(req, res, first, {
      read: () => runsService.view(groupId, runId),
      progress: (view) => ({ id: view.id, status: view.status, progress: view.progress, attempts: view.attempts, error: view.error, resonanceCount: view.resonanceCount }),
      finished: (view) => TERMINAL.has(view.status),
      // Without notifications (no LISTEN connection) the database is read every 2 s.
      subscribe: events ? (onChange) => events.subscribe(runId, onChange) : undefined,
      pollMs: events ? undefined : 2000,
    });
  });

  return router;
}
