import { Router, type Request } from 'express';
import { signedInUser } from '../auth/authenticate.js';
import { requireRole } from '../auth/require-role.js';
import { ApiError } from '../http/error-handler.js';
import { validate } from '../http/validate.js';
import { resonanceNotFound } from '../catalogue/catalogue-service.js';
import { modeMapRequestSchema, type ModeMapRequest } from './mode-map-request.js';
import type { ModeMapService } from './mode-map-service.js';

const uuidPattern = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i;

function idParam(req: Request, name: string, notFound: () => Error): string {
  const id = req.params[name];
  if (typeof id !== 'string' || !uuidPattern.test(id)) throw notFound();
  return id.toLowerCase();
}

/**
 * Mounted at /api/groups/:groupId: GET /resonances/:id/current (the pole's stored
 * current), GET /resonances/:id/mode-maps (maps asked for it), POST /mode-maps (queue
 * or reuse a map), GET /mode-maps/:mapId (status, progress, result). Any member.
 */
export function modeMapRoutes(service: ModeMapService): Router {
  const router = Router({ mergeParams: true });

  router.get('/resonances/:id/current', requireRole(), async (req, res) => {
    res.setHeader('Cache-Control', 'private, no-cache');
    res.json(await service.poleCurrent(req.membership!.groupId, idParam(req, 'id', resonanceNotFound)));
  });

  router.get('/resonances/:id/mode-maps', requireRole(), async (req, res) => {
    res.json({ items: await service.forResonance(req.membership!.groupId, idParam(req, 'id', resonanceNotFound)) });
  });

  router.post('/mode-maps', requireRole(), validate({ body: modeMapRequestSchema }), async (req, res) => {
    const { created, view } = await service.create(req.membership!.groupId, signedInUser(req).id, req.valid.body as ModeMapRequest);
    res.status(created ? 202 : 200).json(view);
  });

  router.get('/mode-maps/:mapId', requireRole(), async (req, res) => {
    const id = idParam(req, 'mapId', () => new ApiError(404, 'not_found', 'No such map in this group.'));
    res.json(await service.view(req.membership!.groupId, id));
  });

  return router;
}
