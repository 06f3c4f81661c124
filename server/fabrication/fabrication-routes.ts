import { Router, type Request } from 'express';
import type { z } from 'zod';
import {
  commentBodySchema,
  fabricationListQuerySchema,
  transitionBodySchema,
  type CommentBody,
  type TransitionBody,
} from '../../shared/api/fabrication.js';
import { writeAudit } from '../audit/audit-log.js';
import { requireRole } from '../auth/require-role.js';
import type { Db } from '../db/client.js';
import { clientGone } from '../http/client-gone.js';
import type { FabricationPackages, PackageFile } from './fabrication-package.js';
import { resonanceNotFound } from '../catalogue/catalogue-service.js';
import { validate } from '../http/validate.js';
import type { Caller, FabricationService } from './fabrication-service.js';

const uuidPattern = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i;

export function resonanceIdOf(req: Request): string {
  const id = req.params.id;
  if (typeof id !== 'string' || !uuidPattern.test(id)) throw resonanceNotFound();
  return id.toLowerCase();
}

export function callerOf(req: Request): Caller {
  return { id: req.auth!.user.id, role: req.membership!.role };
}

/**
 * Mounted at /api/groups/:groupId: the fabrication state of a resonance and its moves, the
 * review queue and Fabrication page lists, and comments. Any member reads; the state machine
 * decides who may take each step (403/409); comments need designer or reviewer.
 */
export function fabricationRoutes(service: FabricationService): Router {
  const router = Router({ mergeParams: true });

  router.get('/fabrication', requireRole(), validate({ query: fabricationListQuerySchema }), async (req, res) => {
    const { state } = req.valid.query as z.infer<typeof fabricationListQuerySchema>;
    res.json({ items: await service.list(req.membership!.groupId, state) });
  });

  router.get('/resonances/:id/fabrication', requireRole(), async (req, res) => {
    res.json(await service.record(req.membership!.groupId, resonanceIdOf(req), callerOf(req)));
  });

  router.post('/resonances/:id/fabrication', requireRole(), validate({ body: transitionBodySchema }), async (req, res) => {
    const id = resonanceIdOf(req);
    res.json(await service.transition(req.membership!.groupId, id, callerOf(req), req.valid.body as TransitionBody));
  });

  router.get('/resonances/:id/comments', requireRole(), async (req, res) => {
    res.json({ items: await service.comments(req.membership!.groupId, resonanceIdOf(req)) });
  });

  router.post('/resonances/:id/comments', requireRole('designer', 'reviewer'), validate({ body: commentBodySchema }), async (req, res) => {
    const id = resonanceIdOf(req);
    res.status(201).json(await service.addComment(req.membership!.groupId, id, callerOf(req), req.valid.body as CommentBody));
  });

  return router;
}

const packageFiles: PackageFile[] = ['package.zip', 'spec.pdf', 'layout.gds', 'layout.dxf', 'layout.svg'];

/**
 * The fabrication package downloads, mounted at /api/groups/:groupId: any member may download
 * (a fabrication partner is a viewer); each download is recorded in the group's activity.
 */
export function fabricationPackageRoutes(db: Db, packages: FabricationPackages): Router {
  const router = Router({ mergeParams: true });
  for (const which of packageFiles) {
    router.get(`/resonances/:id/fabrication/${which}`, requireRole(), async (req, res) => {
      const id = resonanceIdOf(req);
      const file = await packages.file(req.membership!.groupId, id, which, clientGone(res));
      await writeAudit(db, {
        groupId: req.membership!.groupId,
        actorId: req.auth!.user.id,
        action: 'fabrication.downloaded',
        subject: file.fileName,
        details: { resonanceId: id, file: which },
      });
      res.setHeader('Content-Disposition', `attachment; filename="${file.fileName}"`);
      res.type(file.mediaType).send(Buffer.from(file.bytes.buffer, file.bytes.byteOffset, file.bytes.byteLength));
    });
  }
  return router;
}
