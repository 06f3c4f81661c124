import { Router } from 'express';
import { createTokenRoute, listTokensRoute, revokeTokenRoute } from '../../shared/api/account.js';
import type { Db } from '../db/client.js';
import { mountRoute } from '../http/mount-route.js';
import { ApiTokenService } from './api-token-service.js';
import { signedInUser } from './authenticate.js';

/** Personal API tokens of the signed-in user; the secret is returned once, at creation. */
export function apiTokenRoutes(db: Db): Router {
  const tokens = new ApiTokenService(db);
  const router = Router();

  mountRoute(router, listTokensRoute, (_input, req) => tokens.list(signedInUser(req).id));

  mountRoute(router, createTokenRoute, ({ body }, req) => tokens.create(signedInUser(req).id, body.name));

  mountRoute(router, revokeTokenRoute, ({ params }, req) => tokens.revoke(signedInUser(req).id, params.id));

  return router;
}
