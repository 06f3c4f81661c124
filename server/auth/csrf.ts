import { timingSafeEqual } from 'node:crypto';
import type { Request } from 'express';
import { ApiError } from '../http/error-handler.js';
import { csrfCookie } from './session-cookies.js';

const safeMethods = new Set(['GET', 'HEAD', 'OPTIONS']);

function same(a: string, b: string): boolean {
  const x = Buffer.from(a);
  const y = Buffer.from(b);
  return x.length === y.length && timingSafeEqual(x, y);
}

/**
 * Double-submit check: a cookie-authenticated unsafe request must repeat the pw_csrf
 * cookie in X-CSRF-Token. Another site can make the browser send the cookie but cannot
 * read it. Bearer-token requests carry no ambient credential and skip the check.
 */
export function checkCsrf(req: Request): void {
  if (safeMethods.has(req.method) || req.auth?.via !== 'cookie') return;
  const cookie = (req.cookies as Record<string, string | undefined>)[csrfCookie];
  const header = req.get('x-csrf-token');
  if (!cookie || !header || !same(cookie, header)) {
    throw new ApiError(403, 'csrf_failed', 'The X-CSRF-Token header is missing or does not match the pw_csrf cookie.');
  }
}
