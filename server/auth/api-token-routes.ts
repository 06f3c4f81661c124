import { Router } from 'express';
import { createTokenRoute, listTokensRoute, revokeTokenRoute } from '../../shared/api/account.js';
import { writeAudit } from '../audit/audit-log.js';
import type { Db } from '../db/client.js';
import { ApiError } from '../http/error-handler.js';
import { mountRoute } from '../http/mount-route.js';
import { activeApiTokens, insertApiToken, revokeApiToken } from './api-token-repository.js';
import { signedInUser } from './authenticate.js';
import { apiTokenPrefix, hashOpaqueToken, newOpaqueToken } from './opaque-token.js';

/** Personal API tokens of the signed-in user; the secret is returned once, at creation. */
export function apiTokenRoutes(db: Db): Router {
  const router = Router();

  mountRoute(router, listTokensRoute, async (_input, req) => {
    const rows = await activeApiTokens(db, signedInUser(req).id);
    return rows.map((t) => ({ id: t.id, name: t.name, createdAt: t.createdAt, lastUsedAt: t.lastUsedAt }));
  });

  mountRoute(router, createTokenRoute, async ({ body }, req) => {
    const user = signedInUser(req);
    const token = newOpaqueToken(apiTokenPrefix);
    const row = await db.transaction(async (tx) => {
      const created = await insertApiToken(tx, user.id, body.name, hashOpaqueToken(token));
      await writeAudit(tx, { groupId: null, actorId: user.id, accountId: user.id, action: 'api_token.created', subject: body.name });
      return created;
    });
    return { id: row.id, name: row.name, token, createdAt: row.createdAt };
  });

  mountRoute(router, revokeTokenRoute, async ({ params }, req) => {
    const user = signedInUser(req);
    await db.transaction(async (tx) => {
      const row = await revokeApiToken(tx, user.id, params.id);
      if (!row) throw new ApiError(404, 'not_found', 'You have no active API token with this id.');
      await writeAudit(tx, { groupId: null, actorId: user.id, accountId: user.id, action: 'api_token.revoked', subject: row.name });
    });
  });

  return router;
}
