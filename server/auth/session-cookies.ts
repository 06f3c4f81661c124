import type { CookieOptions, Response } from 'express';
import { sessionLifetimeSeconds } from './session-token.js';

export const sessionCookie = 'pw_session';
export const csrfCookie = 'pw_csrf';

function base(secure: boolean): CookieOptions {
  return { sameSite: 'lax', path: '/', secure, maxAge: sessionLifetimeSeconds * 1000 };
}

/** Sets the JWT (httpOnly) and the session's CSRF value (readable by the client). */
export function setSessionCookies(res: Response, jwtToken: string, csrf: string, secure: boolean): void {
  res.cookie(sessionCookie, jwtToken, { ...base(secure), httpOnly: true });
  setCsrfCookie(res, csrf, secure);
}

export function setCsrfCookie(res: Response, csrf: string, secure: boolean): void {
  res.cookie(csrfCookie, csrf, { ...base(secure), httpOnly: false });
}

export function clearSessionCookies(res: Response, secure: boolean): void {
  const { maxAge: _unused, ...opts } = base(secure);
  res.clearCookie(sessionCookie, { ...opts, httpOnly: true });
  res.clearCookie(csrfCookie, opts);
}
