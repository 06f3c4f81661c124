import type { CookieOptions, Response } from 'express';
import { newOpaqueToken } from './opaque-token.js';
import { sessionLifetimeSeconds } from './session-token.js';

export const sessionCookie = 'pw_session';
export const csrfCookie = 'pw_csrf';

function base(secure: boolean): CookieOptions {
  return { sameSite: 'lax', path: '/', secure, maxAge: sessionLifetimeSeconds * 1000 };
}

/** Sets the JWT (httpOnly) and the CSRF double-submit value (readable by the client). Returns the CSRF value. */
export function setSessionCookies(res: Response, jwtToken: string, secure: boolean): string {
  const csrf = newOpaqueToken();
  res.cookie(sessionCookie, jwtToken, { ...base(secure), httpOnly: true });
  res.cookie(csrfCookie, csrf, { ...base(secure), httpOnly: false });
  return csrf;
}

export function clearSessionCookies(res: Response, secure: boolean): void {
  const { maxAge: _unused, ...opts } = base(secure);
  res.clearCookie(sessionCookie, { ...opts, httpOnly: true });
  res.clearCookie(csrfCookie, opts);
}
