import { Router } from 'express';
import { z } from 'zod';
import type { Db } from '../db/client.js';
import { validate } from '../http/validate.js';
import type { AuthService } from './auth-service.js';
import { signedInUser } from './authenticate.js';
import { checkCsrf } from './csrf.js';
import { emailField } from './email-field.js';
import { newPasswordSchema } from './password.js';
import { sessionOf } from './session.js';
import { clearSessionCookies, csrfCookie, setSessionCookies } from './session-cookies.js';
import { signSessionToken } from './session-token.js';
import { attemptLimiter, type AttemptLimit } from './sign-in-limit.js';
import { findUserById } from './user-repository.js';

export const signInBody = z.object({ email: emailField, password: z.string().min(1).max(1000) });
export const resetBody = z.object({ email: emailField });
export const confirmBody = z.object({ token: z.string().min(1).max(200), password: newPasswordSchema });

export interface AuthRouteDeps {
  db: Db;
  auth: AuthService;
  jwtSecret: string;
  secureCookies: boolean;
  signInLimit: AttemptLimit;
  resetLimit: AttemptLimit;
}

export function authRoutes(d: AuthRouteDeps): Router {
  const router = Router();

  router.post('/sign-in', attemptLimiter(d.signInLimit, 'sign-in'), validate({ body: signInBody }), async (req, res) => {
    const { email, password } = req.valid.body as z.infer<typeof signInBody>;
    const user = await d.auth.signIn(email, password);
    const csrf = setSessionCookies(res, signSessionToken(user.id, user.passwordChangedAt.getTime(), d.jwtSecret), d.secureCookies);
    res.json(await sessionOf(d.db, user, csrf));
  });

  router.post('/sign-out', (req, res) => {
    checkCsrf(req);
    clearSessionCookies(res, d.secureCookies);
    res.status(204).end();
  });

  router.get('/session', async (req, res) => {
    const user = signedInUser(req);
    let csrf = '';
    if (req.auth?.via === 'cookie') {
      csrf = (req.cookies as Record<string, string | undefined>)[csrfCookie] ?? '';
      // A lost pw_csrf cookie would make every later POST fail: issue a fresh pair.
      if (!csrf) {
        const row = await findUserById(d.db, user.id);
        csrf = setSessionCookies(res, signSessionToken(user.id, row!.passwordChangedAt.getTime(), d.jwtSecret), d.secureCookies);
      }
    }
    res.json(await sessionOf(d.db, user, csrf));
  });

  router.post('/password-reset', attemptLimiter(d.resetLimit, 'password-reset'), validate({ body: resetBody }), async (req, res) => {
    await d.auth.requestPasswordReset((req.valid.body as z.infer<typeof resetBody>).email);
    res.status(202).json({ message: 'If an account has this e-mail, a reset link is on its way.' });
  });

  router.post('/password-reset/confirm', validate({ body: confirmBody }), async (req, res) => {
    const { token, password } = req.valid.body as z.infer<typeof confirmBody>;
    await d.auth.confirmPasswordReset(token, password);
    res.status(204).end();
  });

  return router;
}
