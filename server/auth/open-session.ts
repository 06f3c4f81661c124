import type { Request, Response } from 'express';
import type { Queryable } from '../db/client.js';
import { csrfTokenFor } from './csrf.js';
import { setSessionCookies } from './session-cookies.js';
import { insertSession, pruneSessions } from './session-repository.js';
import { sessionLifetimeSeconds, signSessionToken } from './session-token.js';

/**
 * Starts a browser session for the user: a sessions row (what sign-out revokes), the
 * JWT naming it, and its CSRF value, set as the two cookies. Returns the CSRF value.
 */
export async function openSession(
  q: Queryable,
  req: Request,
  res: Response,
  userId: string,
  opts: { jwtSecret: string; secureCookies: boolean },
): Promise<string> {
  await pruneSessions(q, userId);
  const row = await insertSession(q, {
    userId,
    expiresAt: new Date(Date.now() + sessionLifetimeSeconds * 1000),
    ip: req.ip ?? null,
    userAgent: req.get('user-agent')?.slice(0, 300) ?? null,
  });
  const csrf = csrfTokenFor(row.id, opts.jwtSecret);
  setSessionCookies(res, signSessionToken(userId, row.id, opts.jwtSecret), csrf, opts.secureCookies);
  return csrf;
}
