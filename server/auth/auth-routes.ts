import { Router } from 'express';
import { z } from 'zod';
import type { Db } from '../db/client.js';
import { validate } from '../http/validate.js';
import type { AuthService } from './auth-service.js';
import { signedInUser } from './authenticate.js';
import { checkCsrf } from './csrf.js';
import { emailField } from './email-field.js';
import { newPasswordSchema } from './password.js';
import { SessionService } from './session-service.js';
import { clearSessionCookies, csrfCookie, setCsrfCookie } from './session-cookies.js';
import { accountAndIpLimiters, attemptLimiter, type AttemptLimit, type AttemptLimits } from './sign-in-limit.js';

export const signInBody = z.object({ email: emailField, password: z.string().min(1).max(1000) });
export const resetBody = z.object({ email: emailField });
export const confirmBody = z.object({ token: z.string().min(1).max(200), password: newPasswordSchema });

export interface AuthRouteDeps {
  db: Db;
  auth: AuthService;
  jwtSecret: string;
  secureCookies: boolean;
  signInLimits: AttemptLimits;
  resetRequestLimits: AttemptLimits;
  linkLimit: AttemptLimit;
  log: (msg: string, err: unknown) => void;
}

export function authRoutes(d: AuthRouteDeps): Router {
  const router = Router();
  const sessions = new SessionService(d.db, { jwtSecret: d.jwtSecret, secureCookies: d.secureCookies });

  // Failed sign-ins only are counted, per account and per IP apart.
  router.post('/sign-in', ...accountAndIpLimiters(d.signInLimits, 'failed sign-in', true), validate({ body: signInBody }), async (req, res) => {
    const { email, password } = req.valid.body as z.infer<typeof signInBody>;
    const user = await d.auth.signIn(email, password, req.ip);
    const csrf = await sessions.open(req, res, user.id);
    res.json(await sessions.describe(user, csrf));
  });

  router.post('/sign-out', async (req, res) => {
    checkCsrf(req);
    if (req.auth?.via === 'cookie') await d.auth.signOut(req.auth.user.id, req.auth.sessionId!, req.ip);
    clearSessionCookies(res, d.secureCookies);
    res.status(204).end();
  });

  router.get('/session', async (req, res) => {
    const user = signedInUser(req);
    let csrf = '';
    if (req.auth?.via === 'cookie') {
      csrf = req.auth.csrfToken!;
      // A lost or stale pw_csrf cookie would make every later POST fail: set it again.
      if ((req.cookies as Record<string, string | undefined>)[csrfCookie] !== csrf) setCsrfCookie(res, csrf, d.secureCookies);
    }
    res.json(await sessions.describe(user, csrf));
  });

  // Answers first, then looks the e-mail up and mails: known and unknown e-mails take the same time.
  router.post('/password-reset', ...accountAndIpLimiters(d.resetRequestLimits, 'password-reset', false), validate({ body: resetBody }), (req, res) => {
    const { email } = req.valid.body as z.infer<typeof resetBody>;
    res.status(202).json({ message: 'If an account has this e-mail, a reset link is on its way.' });
    d.auth.requestPasswordReset(email, req.ip).catch((err: unknown) => d.log(`[poleward] password reset for ${email} failed:`, err));
  });

  router.post(
    '/password-reset/confirm',
    attemptLimiter({ limit: d.linkLimit, what: 'password-reset link', per: 'ip', failuresOnly: true }),
    validate({ body: confirmBody }),
    async (req, res) => {
      const { token, password } = req.valid.body as z.infer<typeof confirmBody>;
      await d.auth.confirmPasswordReset(token, password);
      res.status(204).end();
    },
  );

  return router;
}
