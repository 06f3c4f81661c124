import { Router, type RequestHandler } from 'express';
import { listOutboxRoute, outboxMessageRoute } from '../../shared/api/outbox.js';
import { signedInUser } from '../auth/authenticate.js';
import { outboxHidden } from '../auth/require-operator.js';
import type { Db } from '../db/client.js';
import { mountRoute } from '../http/mount-route.js';
import { OutboxService } from './outbox-service.js';

/**
 * The stand-in's received mail, so a local install can follow invitation and reset links.
 * Only the site operator sees it, and only while the stand-in is the transport. Every read
 * is recorded (or refused), and shown to the account the mail was addressed to.
 */
export function outboxRoutes(db: Db, standInIsTransport: boolean): Router {
  const outbox = new OutboxService(db);
  const router = Router();
  const standInOnly: RequestHandler = (_req, _res, next) => {
    if (!standInIsTransport) throw outboxHidden();
    next();
  };

  mountRoute(router, listOutboxRoute, (_input, req) => outbox.list(signedInUser(req).id), { before: [standInOnly] });

  mountRoute(router, outboxMessageRoute, ({ params }, req) => outbox.read(signedInUser(req).id, params.id), { before: [standInOnly] });

  return router;
}
