import { Router, type RequestHandler } from 'express';
import { listOutboxRoute, outboxMessageRoute } from '../../shared/api/outbox.js';
import { writeAudit } from '../audit/audit-log.js';
import { signedInUser } from '../auth/authenticate.js';
import { outboxHidden } from '../auth/require-operator.js';
import { findUserByEmail } from '../auth/user-repository.js';
import type { Db } from '../db/client.js';
import { ApiError } from '../http/error-handler.js';
import { mountRoute } from '../http/mount-route.js';
import { findOutboxMessage, recentOutboxMessages } from './outbox-repository.js';

/**
 * The stand-in's received mail, so a local install can follow invitation and reset links.
 * Only while the stand-in is the transport and only for the site operator (see
 * auth/site-operator.ts); 404 otherwise. The list carries no bodies; every message read
 * is recorded (or refused), and shown to the account the mail was addressed to.
 */
export function outboxRoutes(db: Db, standInIsTransport: boolean): Router {
  const router = Router();
  const standInOnly: RequestHandler = (_req, _res, next) => {
    if (!standInIsTransport) throw outboxHidden();
    next();
  };

  mountRoute(
    router,
    listOutboxRoute,
    async (_input, req) => {
      const user = signedInUser(req);
      const messages = await recentOutboxMessages(db);
      await writeAudit(db, { groupId: null, actorId: user.id, accountId: user.id, action: 'outbox.listed', subject: `${messages.length} messages` });
      return messages;
    },
    { before: [standInOnly] },
  );

  mountRoute(
    router,
    outboxMessageRoute,
    async ({ params }, req) => {
      const user = signedInUser(req);
      const message = await findOutboxMessage(db, params.id);
      if (!message) throw new ApiError(404, 'not_found', 'No such message in the outbox.');
      const recipient = await findUserByEmail(db, message.to);
      // Recorded before the answer, and a failure to record refuses the read: no unrecorded reads.
      await writeAudit(db, {
        groupId: null,
        actorId: user.id,
        accountId: recipient?.id ?? null,
        action: 'outbox.read',
        subject: message.subject,
        details: { messageId: params.id, to: message.to },
      });
      return message;
    },
    { before: [standInOnly] },
  );

  return router;
}
