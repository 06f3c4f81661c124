import { Router } from 'express';
import { z } from 'zod';
import { newPasswordSchema } from '../auth/password.js';
import { sessionOf } from '../auth/session.js';
import { setSessionCookies } from '../auth/session-cookies.js';
import { signSessionToken } from '../auth/session-token.js';
import type { Db } from '../db/client.js';
import { validate } from '../http/validate.js';
import type { InvitationService } from './invitation-service.js';

export const tokenParams = z.object({ token: z.string().min(1).max(200) });
export const acceptBody = z.object({ name: z.string().trim().min(1, 'must not be empty').max(100), password: newPasswordSchema });

/** The public side of invitations: the link's landing page and its accept button. */
export function invitationRoutes(d: { db: Db; invitations: InvitationService; jwtSecret: string; secureCookies: boolean }): Router {
  const router = Router();

  router.get('/:token', validate({ params: tokenParams }), async (req, res) => {
    res.json(await d.invitations.preview((req.valid.params as z.infer<typeof tokenParams>).token));
  });

  router.post('/:token/accept', validate({ params: tokenParams, body: acceptBody }), async (req, res) => {
    const { token } = req.valid.params as z.infer<typeof tokenParams>;
    const { name, password } = req.valid.body as z.infer<typeof acceptBody>;
    const user = await d.invitations.accept(token, name, password);
    const csrf = setSessionCookies(res, signSessionToken(user.id, user.passwordChangedAt.getTime(), d.jwtSecret), d.secureCookies);
    res.status(201).json(await sessionOf(d.db, user, csrf));
  });

  return router;
}
