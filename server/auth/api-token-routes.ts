import { Router } from 'express';
import { z } from 'zod';
import { writeAudit } from '../audit/audit-log.js';
import type { Db } from '../db/client.js';
import { ApiError } from '../http/error-handler.js';
import { validate } from '../http/validate.js';
import { activeApiTokens, insertApiToken, revokeApiToken } from './api-token-repository.js';
import { signedInUser } from './authenticate.js';
import { apiTokenPrefix, hashOpaqueToken, newOpaqueToken } from './opaque-token.js';
import { requireAuth } from './require-auth.js';

export const createBody = z.object({ name: z.string().trim().min(1, 'must not be empty').max(100) });
export const tokenParams = z.object({ id: z.uuid() });

/** Personal API tokens of the signed-in user; the secret is returned once, at creation. */
export function apiTokenRoutes(db: Db): Router {
  const router = Router();
  router.use(requireAuth);

  router.get('/', async (req, res) => {
    const rows = await activeApiTokens(db, signedInUser(req).id);
    res.json(rows.map((t) => ({ id: t.id, name: t.name, createdAt: t.createdAt.toISOString(), lastUsedAt: t.lastUsedAt?.toISOString() ?? null })));
  });

  router.post('/', validate({ body: createBody }), async (req, res) => {
    const user = signedInUser(req);
    const { name } = req.valid.body as z.infer<typeof createBody>;
    const token = newOpaqueToken(apiTokenPrefix);
    const row = await db.transaction(async (tx) => {
      const created = await insertApiToken(tx, user.id, name, hashOpaqueToken(token));
      await writeAudit(tx, { groupId: null, actorId: user.id, accountId: user.id, action: 'api_token.created', subject: name });
      return created;
    });
    res.status(201).json({ id: row.id, name: row.name, token, createdAt: row.createdAt.toISOString() });
  });

  router.delete('/:id', validate({ params: tokenParams }), async (req, res) => {
    const user = signedInUser(req);
    const { id } = req.valid.params as { id: string };
    await db.transaction(async (tx) => {
      const row = await revokeApiToken(tx, user.id, id);
      if (!row) throw new ApiError(404, 'not_found', 'You have no active API token with this id.');
      await writeAudit(tx, { groupId: null, actorId: user.id, accountId: user.id, action: 'api_token.revoked', subject: row.name });
    });
    res.status(204).end();
  });

  return router;
}
