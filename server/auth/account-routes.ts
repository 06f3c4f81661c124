import { Router } from 'express';
import { accountActivityRoute } from '../../shared/api/account.js';
import { accountActivity } from '../audit/activity.js';
import type { Db } from '../db/client.js';
import { mountRoute } from '../http/mount-route.js';
import { signedInUser } from './authenticate.js';

/** /api/account: what concerns the signed-in person's own account. */
export function accountRoutes(db: Db): Router {
  const router = Router();
  // Sign-ins (and failed ones), sign-outs, resets, tokens, role changes, mail of theirs the operator read.
  mountRoute(router, accountActivityRoute, ({ query }, req) => accountActivity(db, signedInUser(req).id, query.limit));
  return router;
}
