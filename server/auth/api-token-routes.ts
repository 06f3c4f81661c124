import { Router } from 'express';
import { z } from 'zod';
import type { Db } from '../db/client.js';
import { validate } from '../http/validate.js';
import { ApiTokenService } from './api-token-service.js';
import { signedInUser } from './authenticate.js';
import { requireAuth } from './require-auth.js';

export const createBody = z.object({ name: z.string().trim().min(1, 'must not be empty').max(100) });
export const tokenParams = z.object({ id: z.uuid() });

/** Personal API tokens of the signed-in user; the secret is returned once, at creation. */
export function apiTokenRoutes(db: Db): Router {
  const tokens = new ApiTokenService(db);
  const router = Router();
  router.use(requireAuth);

  router.get('/', async (req, res) => {
    res.json(await tokens.list(signedInUser(req).id));
  });

  router.post('/', validate({ body: createBody }), async (req, res) => {
    const { name } = req.valid.body as z.infer<typeof createBody>;
    res.status(201).json(await tokens.create(signedInUser(req).id, name));
  });

  router.delete('/:id', validate({ params: tokenParams }), async (req, res) => {
    const { id } = req.valid.params as { id: string };
    await tokens.revoke(signedInUser(req).id, id);
    res.status(204).end();
  });

  return router;
}
