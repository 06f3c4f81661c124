import { Router } from 'express';
import { z } from 'zod';
import { writeAudit } from '../audit/audit-log.js';
import { signedInUser } from '../auth/authenticate.js';
import { findUserByEmail } from '../auth/user-repository.js';
import type { Db } from '../db/client.js';
import { ApiError } from '../http/error-handler.js';
import { validate } from '../http/validate.js';
import { findOutboxMessage, recentOutboxMessages } from './outbox-repository.js';

export const messageParams = z.object({ id: z.uuid() });

const hidden = () => new ApiError(404, 'not_found', 'There is no outbox: mail goes to a real provider, or you are not the site operator.');

/**
 * The stand-in's received mail, so a local install can follow invitation and reset links.
 * Only while the stand-in is the transport and only for the site operator (see
 * auth/site-operator.ts); 404 otherwise. The list carries no bodies; every message read
 * is recorded (or refused), and shown to the account the mail was addressed to.
 */
export function outboxRoutes(db: Db, standInIsTransport: boolean): Router {
  const router = Router();
  router.use((req, _res, next) => {
    const user = signedInUser(req);
    if (!standInIsTransport || !user.siteOperator) throw hidden();
    next();
  });
  router.get('/', async (req, res) => {
    const user = signedInUser(req);
    const messages = await recentOutboxMessages(db);
    await writeAudit(db, { groupId: null, actorId: user.id, accountId: user.id, action: 'outbox.listed', subject: `${messages.length} messages` });
    res.json(messages);
  });
  router.get('/:id', validate({ params: messageParams }), async (req, res) => {
    const user = signedInUser(req);
    const { id } = req.valid.params as { id: string };
    const message = await findOutboxMessage(db, id);
    if (!message) throw new ApiError(404, 'not_found', 'No such message in the outbox.');
    const recipient = await findUserByEmail(db, message.to);
    // Recorded before the answer, and a failure to record refuses the read: no unrecorded reads.
    await writeAudit(db, {
      groupId: null,
      actorId: user.id,
      accountId: recipient?.id ?? null,
      action: 'outbox.read',
      subject: message.subject,
      details: { messageId: id, to: message.to },
    });
    res.json(message);
  });
  return router;
}
