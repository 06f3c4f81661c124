import { Router } from 'express';
import { z } from 'zod';
import type { Db } from '../db/client.js';
import { validate } from '../http/validate.js';
import { AccountService } from './account-service.js';
import { signedInUser } from './authenticate.js';
import { requireAuth } from './require-auth.js';

export const accountActivityQuery = z.object({ limit: z.coerce.number().int().min(1).max(200).default(30) });

/** /api/account: what concerns the signed-in person's own account. */
export function accountRoutes(db: Db): Router {
  const account = new AccountService(db);
  const router = Router();
  router.use(requireAuth);

  // Sign-ins (and failed ones), sign-outs, resets, tokens, role changes, mail of theirs the operator read.
  router.get('/activity', validate({ query: accountActivityQuery }), async (req, res) => {
    const { limit } = req.valid.query as z.infer<typeof accountActivityQuery>;
    res.json(await account.activity(signedInUser(req).id, limit));
  });

  return router;
}
