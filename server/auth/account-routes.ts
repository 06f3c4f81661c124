import { Router } from 'express';
import { z } from 'zod';
import { accountRenameBody, passwordChangeBody } from '../../shared/api/account.js';
import type { Db } from '../db/client.js';
import { validate } from '../http/validate.js';
import type { AccountService } from './account-service.js';
import { signedInUser } from './authenticate.js';
import { openSession } from './open-session.js';
import { requireAuth } from './require-auth.js';
import { clearSessionCookies } from './session-cookies.js';

export const accountActivityQuery = z.object({ limit: z.coerce.number().int().min(1).max(200).default(30) });

export interface AccountRouteDeps {
  db: Db;
  account: AccountService;
  jwtSecret: string;
  secureCookies: boolean;
}

/** /api/account: what concerns the signed-in person's own account. */
export function accountRoutes(d: AccountRouteDeps): Router {
  const { db } = d;
  const router = Router();
  router.use(requireAuth);

  router.get('/', async (req, res) => {
    res.json(await d.account.profile(signedInUser(req).id));
  });

  router.patch('/', validate({ body: accountRenameBody }), async (req, res) => {
    const { name } = req.valid.body as z.infer<typeof accountRenameBody>;
    res.json(await d.account.rename(signedInUser(req).id, name));
  });

  // The change ends every session; a browser that made it gets a fresh one and stays signed in.
  router.post('/password', validate({ body: passwordChangeBody }), async (req, res) => {
    const { currentPassword, newPassword } = req.valid.body as z.infer<typeof passwordChangeBody>;
    const user = signedInUser(req);
    await d.account.changePassword(user.id, currentPassword, newPassword);
    if (req.auth?.via === 'cookie') await openSession(db, req, res, user.id, { jwtSecret: d.jwtSecret, secureCookies: d.secureCookies });
    res.status(204).end();
  });

  router.post('/sign-out-everywhere', async (req, res) => {
    const answer = await d.account.signOutEverywhere(signedInUser(req).id);
    clearSessionCookies(res, d.secureCookies);
    res.json(answer);
  });

  // Sign-ins (and failed ones), sign-outs, resets, tokens, role changes, mail of theirs the operator read.
  router.get('/activity', validate({ query: accountActivityQuery }), async (req, res) => {
    const { limit } = req.valid.query as z.infer<typeof accountActivityQuery>;
    res.json(await d.account.activity(signedInUser(req).id, limit));
  });

  return router;
}
