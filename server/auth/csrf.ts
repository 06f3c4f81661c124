import { createHmac, timingSafeEqual } from 'node:crypto';
import type { Request } from 'express';
import { ApiError } from '../http/error-handler.js';

const safeMethods = new Set(['GET', 'HEAD', 'OPTIONS']);

function same(a: string, b: string): boolean {
  const x = Buffer.from(a);
  const y = Buffer.from(b);
  return x.length === y.length && timingSafeEqual(x, y);
}

/**
 * The CSRF value of one session: an HMAC of the session id under the server's secret.
 * Bound to the session, so a value planted in the browser's pw_csrf cookie (by a
 * sibling subdomain, say) or taken from another session never passes; nothing to store.
 */
export function csrfTokenFor(sessionId: string, secret: string): string {
  return createHmac('sha256', secret).update(`csrf:${sessionId}`).digest('base64url');
}

/**
 * A cookie-authenticated unsafe request must send its session's CSRF value in
 * X-CSRF-Token (the client reads it from the pw_csrf cookie or the Session). Another
 * site can make the browser send the cookie but cannot read it. Bearer-token requests
 * carry no ambient credential and skip the check.
 */
export function checkCsrf(req: Request): void {
  if (safeMethods.has(req.method) || req.auth?.via !== 'cookie') return;
  const header = req.get('x-csrf-token');
  if (!header || !req.auth.csrfToken || !same(req.auth.csrfToken, header)) {
    throw new ApiError(403, 'csrf_failed', 'The X-CSRF-Token header is missing or is not the CSRF value of this session (see pw_csrf).');
  }
}
