import { Router } from 'express';
import { z } from 'zod';
import { signedInUser } from '../auth/authenticate.js';
import type { Db } from '../db/client.js';
import { ApiError } from '../http/error-handler.js';
import { validate } from '../http/validate.js';
import { OutboxService } from './outbox-service.js';

export const messageParams = z.object({ id: z.uuid() });

const hidden = () => new ApiError(404, 'not_found', 'There is no outbox: mail goes to a real provider, or you are not the site operator.');

/**
 * The stand-in's received mail, so a local install can follow invitation and reset links.
 * Only while the stand-in is the transport and only for the site operator (see
 * auth/site-operator.ts); 404 otherwise. The list carries no bodies; every message read
 * is recorded (or refused), and shown to the account the mail was addressed to.
 */
export function outboxRoutes(db: Db, standInIsTransport: boolean): Router {
  const outbox = new OutboxService(db);
  const router = Router();
  router.use((req, _res, next) => {
    const user = signedInUser(req);
    if (!standInIsTransport || !user.siteOperator) throw hidden();
    next();
  });
  router.get('/', async (req, res) => {
    res.json(await outbox.list(signedInUser(req).id));
  });
  router.get('/:id', validate({ params: messageParams }), async (req, res) => {
    const { id } = req.valid.params as { id: string };
    res.json(await outbox.read(signedInUser(req).id, id));
  });
  return router;
}
