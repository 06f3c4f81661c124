import { Router, type Request } from 'express';
import {
  addCommentRoute,
  getFabricationRoute,
  listCommentsRoute,
  listFabricationRoute,
  moveFabricationRoute,
  packageFileRoutes,
  PACKAGE_FILES,
} from '../../shared/api/fabrication.js';
import { resonanceNotFound } from '../catalogue/catalogue-service.js';
import type { Db } from '../db/client.js';
import { clientGone } from '../http/client-gone.js';
import { mountRoute } from '../http/mount-route.js';
import type { FabricationPackages } from './fabrication-package.js';
import type { Caller, FabricationService } from './fabrication-service.js';

const uuidPattern = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i;

/** A malformed id cannot be one of the group's resonances: 404 like any other stranger's id. */
function resonanceIdOf(id: string): string {
  if (!uuidPattern.test(id)) throw resonanceNotFound();
  return id.toLowerCase();
}

function callerOf(req: Request): Caller {
  return { id: req.auth!.user.id, role: req.membership!.role };
}

/**
 * The fabrication state of a resonance and its moves, the review queue and Fabrication page
 * lists, and comments (declarations in shared/api/fabrication.ts). Any member reads; the
 * state machine decides who may take each step (403/409); comments need designer or reviewer.
 */
export function fabricationRoutes(service: FabricationService): Router {
  const router = Router();
  mountRoute(router, listFabricationRoute, async ({ query }, req) => ({ items: await service.list(req.membership!.groupId, query.state) }));
  mountRoute(router, getFabricationRoute, ({ params }, req) => service.record(req.membership!.groupId, resonanceIdOf(params.id), callerOf(req)));
  mountRoute(router, moveFabricationRoute, ({ params, body }, req) =>
    service.transition(req.membership!.groupId, resonanceIdOf(params.id), callerOf(req), body),
  );
  mountRoute(router, listCommentsRoute, async ({ params }, req) => ({ items: await service.comments(req.membership!.groupId, resonanceIdOf(params.id)) }));
  mountRoute(router, addCommentRoute, ({ params, body }, req) => service.addComment(req.membership!.groupId, resonanceIdOf(params.id), callerOf(req), body));
  return router;
}

/**
 * The fabrication package downloads: any member may download (a fabrication partner is a
 * viewer); each download is recorded in the group's activity.
 */
export function fabricationPackageRoutes(db: Db, packages: FabricationPackages): Router {
  const router = Router();
  for (const which of PACKAGE_FILES) {
    mountRoute(router, packageFileRoutes[which], async ({ params }, req, res) => {
      const id = resonanceIdOf(params.id);
      const file = await packages.file(req.membership!.groupId, id, which, clientGone(res));
      await packages.recordDownload(req.membership!.groupId, req.auth!.user.id, file.fileName, id, which);
      res.setHeader('Content-Disposition', `attachment; filename="${file.fileName}"`);
      res
        .status(200)
        .type(file.mediaType)
        .send(Buffer.from(file.bytes.buffer, file.bytes.byteOffset, file.bytes.byteLength));
    });
  }
  return router;
}
