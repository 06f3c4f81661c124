import type { Request, RequestHandler } from 'express';
import type { Db } from '../db/client.js';
import { ApiError } from '../http/error-handler.js';
import { findActiveApiToken, touchApiToken } from './api-token-repository.js';
import { csrfTokenFor } from './csrf.js';
import { apiTokenPrefix, hashOpaqueToken } from './opaque-token.js';
import { sessionCookie } from './session-cookies.js';
import { findLiveSessionInGroup, type SessionInGroup } from './session-repository.js';
import { verifySessionToken } from './session-token.js';
import { findUserById } from './user-repository.js';

export interface AuthUser {
  id: string;
  email: string;
  name: string;
  /** Runs this installation: may read the local mail outbox. */
  siteOperator: boolean;
}

declare module 'express-serve-static-core' {
  interface Request {
    /** Set by authenticate when the request carries a valid session cookie or personal token. */
    auth?: {
      user: AuthUser;
      via: 'cookie' | 'token';
      tokenId?: string;
      /** The sessions row of a cookie request, and the CSRF value bound to it. */
      sessionId?: string;
      csrfToken?: string;
    };
    /** Why a session cookie was refused, for the 401 message of a protected route. */
    authProblem?: string;
    /**
     * The caller's membership of the group the path names (/groups/:groupId/…), read with
     * the session in the same query; requireRole uses it instead of asking again.
     */
    groupAccess?: { groupId: string; membership: SessionInGroup['membership'] };
  }
}

const authUser = (u: AuthUser): AuthUser => ({ id: u.id, email: u.email, name: u.name, siteOperator: u.siteOperator });

const groupPath = /^\/groups\/([0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12})(?:\/|$)/i;

/** The group id a request path names (/groups/:groupId/…), or null. */
function groupIdInPath(path: string): string | null {
  return groupPath.exec(path)?.[1]?.toLowerCase() ?? null;
}

/**
 * Resolves who is calling, without refusing anyone: public routes still work with a
 * stale cookie. A Bearer header is an explicit claim, so a bad one answers 401 at once.
 * A cookie holds only while its sessions row is neither revoked (sign-out, password
 * reset) nor expired.
 */
export function authenticate(db: Db, jwtSecret: string): RequestHandler {
  return async (req, _res, next) => {
    const header = req.get('authorization');
    if (header !== undefined) {
      const match = /^Bearer\s+(\S+)$/i.exec(header);
      if (!match || !match[1]!.startsWith(apiTokenPrefix)) {
        throw new ApiError(401, 'unauthenticated', `The Authorization header must be "Bearer ${apiTokenPrefix}…" with a personal API token.`);
      }
      const token = await findActiveApiToken(db, hashOpaqueToken(match[1]!));
      const user = token && (await findUserById(db, token.userId));
      if (!token || !user) throw new ApiError(401, 'unauthenticated', 'The API token is unknown or has been revoked.');
      await touchApiToken(db, token.id);
      req.auth = { user: authUser(user), via: 'token', tokenId: token.id };
      return next();
    }
    const jwtToken = (req.cookies as Record<string, string | undefined>)[sessionCookie];
    if (jwtToken) {
      const claims = verifySessionToken(jwtToken, jwtSecret);
      const groupId = groupIdInPath(req.path);
      const live = claims && (await findLiveSessionInGroup(db, claims.sessionId, claims.userId, groupId));
      if (!claims || !live) {
        req.authProblem = 'Your session is invalid, has ended or has expired; sign in again.';
      } else {
        const sessionId = live.sessionId;
        let csrf: string | undefined;
        req.auth = {
          user: authUser(live.user),
          via: 'cookie',
          sessionId,
          // An HMAC, computed only when a write or the session description needs it.
          get csrfToken() {
            return (csrf ??= csrfTokenFor(sessionId, jwtSecret));
          },
        };
        if (groupId) req.groupAccess = { groupId, membership: live.membership };
      }
    }
    next();
  };
}

/** Throws 401 unless someone is signed in; narrows req.auth. */
export function signedInUser(req: Request): AuthUser {
  if (!req.auth) throw new ApiError(401, 'unauthenticated', req.authProblem ?? 'Sign in first.');
  return req.auth.user;
}
