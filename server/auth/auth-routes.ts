import { Router } from 'express';
import { confirmPasswordResetRoute, requestPasswordResetRoute, sessionRoute, signInRoute, signOutRoute } from '../../shared/api/auth.js';
import type { Db } from '../db/client.js';
import { mountRoute } from '../http/mount-route.js';
import type { AuthService } from './auth-service.js';
import { signedInUser } from './authenticate.js';
import { checkCsrf } from './csrf.js';
import { SessionService } from './session-service.js';
import { clearSessionCookies, csrfCookie, setCsrfCookie } from './session-cookies.js';
import { accountAndIpLimiters, attemptLimiter, type AttemptLimit, type AttemptLimits } from './sign-in-limit.js';

interface AuthRouteDeps {
  db: Db;
  auth: AuthService;
  jwtSecret: string;
  secureCookies: boolean;
  signInLimits: AttemptLimits;
  resetRequestLimits: AttemptLimits;
  linkLimit: AttemptLimit;
  log: (msg: string, err: unknown) => void;
}

/** /api/auth/… */
export function authRoutes(d: AuthRouteDeps): Router {
  const router = Router();
  const sessions = new SessionService(d.db, { jwtSecret: d.jwtSecret, secureCookies: d.secureCookies });

  // Failed sign-ins only are counted, per account and per IP apart.
  mountRoute(
    router,
    signInRoute,
    async ({ body }, req, res) => {
      const user = await d.auth.signIn(body.email, body.password, req.ip);
      const csrf = await sessions.open(req, res, user.id);
      return sessions.describe(user, csrf);
    },
    { before: accountAndIpLimiters(d.signInLimits, 'failed sign-in', true) },
  );

  mountRoute(router, signOutRoute, async (_input, req, res) => {
    checkCsrf(req);
    if (req.auth?.via === 'cookie') await d.auth.signOut(req.auth.user.id, req.auth.sessionId!, req.ip);
    clearSessionCookies(res, d.secureCookies);
  });

  mountRoute(router, sessionRoute, async (_input, req, res) => {
    const user = signedInUser(req);
    let csrf = '';
    if (req.auth?.via === 'cookie') {
      csrf = req.auth.csrfToken!;
      // A lost or stale pw_csrf cookie would make every later POST fail: set it again.
      if ((req.cookies as Record<string, string | undefined>)[csrfCookie] !== csrf) setCsrfCookie(res, csrf, d.secureCookies);
    }
    return sessions.describe(user, csrf);
  });

  // Answers first, then looks the e-mail up and mails: known and unknown e-mails take the same time.
  mountRoute(
    router,
    requestPasswordResetRoute,
    ({ body }, req, res) => {
      res.once('finish', () => {
        d.auth.requestPasswordReset(body.email, req.ip).catch((err: unknown) => d.log(`[poleward] password reset for ${body.email} failed:`, err));
      });
      return { message: 'If an account has this e-mail, a reset link is on its way.' };
    },
    { before: accountAndIpLimiters(d.resetRequestLimits, 'password-reset', false) },
  );

  mountRoute(
    router,
    confirmPasswordResetRoute,
    async ({ body }) => {
      await d.auth.confirmPasswordReset(body.token, body.password);
    },
    { before: [attemptLimiter({ limit: d.linkLimit, what: 'password-reset link', per: 'ip', failuresOnly: true })] },
  );

  return router;
}
