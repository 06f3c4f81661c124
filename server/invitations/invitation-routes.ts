import { Router } from 'express';
import { acceptInvitationRoute, previewInvitationRoute } from '../../shared/api/auth.js';
import { SessionService } from '../auth/session-service.js';
import { attemptLimiter, type AttemptLimit } from '../auth/sign-in-limit.js';
import type { Db } from '../db/client.js';
import { mountRoute } from '../http/mount-route.js';
import type { InvitationService } from './invitation-service.js';

/** The public side of invitations: the link's landing page and its accept button. */
export function invitationRoutes(d: { db: Db; invitations: InvitationService; jwtSecret: string; secureCookies: boolean; linkLimit: AttemptLimit }): Router {
  const sessions = new SessionService(d.db, { jwtSecret: d.jwtSecret, secureCookies: d.secureCookies });
  const router = Router();

  mountRoute(router, previewInvitationRoute, ({ params }) => d.invitations.preview(params.token));

  // Failed accepts (unknown link, wrong password of an existing account) are limited per IP.
  mountRoute(
    router,
    acceptInvitationRoute,
    async ({ params, body }, req, res) => {
      const user = await d.invitations.accept(params.token, body.name, body.password);
      const csrf = await sessions.open(req, res, user.id);
      return sessions.describe(user, csrf);
    },
    { before: [attemptLimiter({ limit: d.linkLimit, what: 'invitation', per: 'ip', failuresOnly: true })] },
  );

  return router;
}
