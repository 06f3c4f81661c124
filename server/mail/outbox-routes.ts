import { Router } from 'express';
import { z } from 'zod';
import { signedInUser } from '../auth/authenticate.js';
import { isAdminSomewhere } from '../auth/user-repository.js';
import type { Db } from '../db/client.js';
import { ApiError } from '../http/error-handler.js';
import { validate } from '../http/validate.js';
import { findOutboxMessage, recentOutboxMessages } from './outbox-repository.js';

export const messageParams = z.object({ id: z.uuid() });

const hidden = () => new ApiError(404, 'not_found', 'There is no outbox: mail goes to a real provider, or you are not an admin of any group.');

/**
 * The stand-in's received mail, so a local install can follow invitation and reset links.
 * Only while the stand-in is the transport and only for admins; 404 otherwise.
 */
export function outboxRoutes(db: Db, standInIsTransport: boolean): Router {
  const router = Router();
  router.use(async (req, _res, next) => {
    const user = signedInUser(req);
    if (!standInIsTransport || !(await isAdminSomewhere(db, user.id))) throw hidden();
    next();
  });
  router.get('/', async (_req, res) => {
    res.json(await recentOutboxMessages(db));
  });
  router.get('/:id', validate({ params: messageParams }), async (req, res) => {
    const { id } = req.valid.params as { id: string };
    const message = await findOutboxMessage(db, id);
    if (!message) throw new ApiError(404, 'not_found', 'No such message in the outbox.');
    res.json(message);
  });
  return router;
}
