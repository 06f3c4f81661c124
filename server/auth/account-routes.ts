import { Router } from 'express';
import { accountActivityRoute, accountProfileRoute, accountRenameRoute, passwordChangeRoute, signOutEverywhereRoute } from '../../shared/api/account.js';
import type { Db } from '../db/client.js';
import { mountRoute } from '../http/mount-route.js';
import type { AccountService } from './account-service.js';
import { signedInUser } from './authenticate.js';
import { openSession } from './open-session.js';
import { clearSessionCookies } from './session-cookies.js';

interface AccountRouteDeps {
  db: Db;
  account: AccountService;
  jwtSecret: string;
  secureCookies: boolean;
}

/** /api/account: what concerns the signed-in person's own account. */
export function accountRoutes(d: AccountRouteDeps): Router {
  const router = Router();

  mountRoute(router, accountProfileRoute, (_input, req) => d.account.profile(signedInUser(req).id));

  mountRoute(router, accountRenameRoute, ({ body }, req) => d.account.rename(signedInUser(req).id, body.name));

  // The change ends every session; a browser that made it gets a fresh one and stays signed in.
  mountRoute(router, passwordChangeRoute, async ({ body }, req, res) => {
    const user = signedInUser(req);
    await d.account.changePassword(user.id, body.currentPassword, body.newPassword);
    if (req.auth?.via === 'cookie') await openSession(d.db, req, res, user.id, { jwtSecret: d.jwtSecret, secureCookies: d.secureCookies });
  });

  mountRoute(router, signOutEverywhereRoute, async (_input, req, res) => {
    const answer = await d.account.signOutEverywhere(signedInUser(req).id);
    clearSessionCookies(res, d.secureCookies);
    return answer;
  });

  // Sign-ins (and failed ones), sign-outs, resets, tokens, role changes, mail of theirs the operator read.
  mountRoute(router, accountActivityRoute, ({ query }, req) => d.account.activity(signedInUser(req).id, query.limit));

  return router;
}
