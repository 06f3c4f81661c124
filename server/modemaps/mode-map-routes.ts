import { Router } from 'express';
import { createModeMapRoute, getModeMapRoute, resonanceCurrentRoute, resonanceModeMapsRoute } from '../../shared/api/mode-maps.js';
import { signedInUser } from '../auth/authenticate.js';
import { resonanceId } from '../catalogue/resonance-routes.js';
import { ApiError } from '../http/error-handler.js';
import { mountRoute, withStatus } from '../http/mount-route.js';
import type { ModeMapService } from './mode-map-service.js';

const uuidPattern = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i;

/** A malformed map id cannot be one of the group's maps: 404 like any other. */
function mapId(id: string): string {
  if (!uuidPattern.test(id)) throw new ApiError(404, 'not_found', 'No such map in this group.');
  return id.toLowerCase();
}

/**
 * Below /api/groups/:groupId: GET /resonances/:id/current (the pole's stored current),
 * GET /resonances/:id/mode-maps (maps asked for it), POST /mode-maps (queue or reuse a
 * map), GET /mode-maps/:mapId (status, progress, result). Any member.
 */
export function modeMapRoutes(service: ModeMapService): Router {
  const router = Router();

  mountRoute(router, resonanceCurrentRoute, ({ params }, req, res) => {
    res.setHeader('Cache-Control', 'private, no-cache');
    return service.poleCurrent(req.membership!.groupId, resonanceId(params.id));
  });

  mountRoute(router, resonanceModeMapsRoute, async ({ params }, req) => ({
    items: await service.forResonance(req.membership!.groupId, resonanceId(params.id)),
  }));

  mountRoute(router, createModeMapRoute, async ({ body }, req) => {
    const { created, view } = await service.create(req.membership!.groupId, signedInUser(req).id, body);
    return withStatus(created ? 202 : 200, view);
  });

  mountRoute(router, getModeMapRoute, ({ params }, req) => service.view(req.membership!.groupId, mapId(params.mapId)));

  return router;
}
