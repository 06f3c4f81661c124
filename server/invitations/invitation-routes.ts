import { Router } from 'express';
import { z } from 'zod';
import { newPasswordSchema } from '../auth/password.js';
import { SessionService } from '../auth/session-service.js';
import { attemptLimiter, type AttemptLimit } from '../auth/sign-in-limit.js';
import type { Db } from '../db/client.js';
import { validate } from '../http/validate.js';
import type { InvitationService } from './invitation-service.js';

export const tokenParams = z.object({ token: z.string().min(1).max(200) });
export const acceptBody = z.object({ name: z.string().trim().min(1, 'must not be empty').max(100), password: newPasswordSchema });

/** The public side of invitations: the link's landing page and its accept button. */
export function invitationRoutes(d: {
  db: Db;
  invitations: InvitationService;
  jwtSecret: string;
  secureCookies: boolean;
  linkLimit: AttemptLimit;
}): Router {
  const sessions = new SessionService(d.db, { jwtSecret: d.jwtSecret, secureCookies: d.secureCookies });
  const router = Router();

  router.get('/:token', validate({ params: tokenParams }), async (req, res) => {
    res.json(await d.invitations.preview((req.valid.params as z.infer<typeof tokenParams>).token));
  });

  // Failed accepts (unknown link, wrong password of an existing account) are limited per IP.
  router.post(
    '/:token/accept',
    attemptLimiter({ limit: d.linkLimit, what: 'invitation', per: 'ip', failuresOnly: true }),
    validate({ params: tokenParams, body: acceptBody }),
    async (req, res) => {
      const { token } = req.valid.params as z.infer<typeof tokenParams>;
      const { name, password } = req.valid.body as z.infer<typeof acceptBody>;
      const user = await d.invitations.accept(token, name, password);
      const csrf = await sessions.open(req, res, user.id);
      res.status(201).json(await sessions.describe(user, csrf));
    },
  );

  return router;
}
