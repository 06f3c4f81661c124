import type { RequestHandler } from 'express';
import { ipKeyGenerator, rateLimit } from 'express-rate-limit';
import { ApiError } from '../http/error-handler.js';

export interface AttemptLimit {
  /** Attempts allowed per window. */
  max: number;
  windowMs: number;
}

/** 10 attempts per 15 minutes per IP and e-mail: slows guessing without locking out a typo-prone person. */
export const defaultSignInLimit: AttemptLimit = { max: 10, windowMs: 15 * 60 * 1000 };

/**
 * Counts requests per client IP (IPv6 grouped by /56 via ipKeyGenerator) and lower-cased
 * e-mail of the body. Kept in memory: one API process, and a restart only forgives.
 */
export function attemptLimiter(limit: AttemptLimit, what: string): RequestHandler {
  return rateLimit({
    windowMs: limit.windowMs,
    limit: limit.max,
    standardHeaders: 'draft-8',
    legacyHeaders: false,
    keyGenerator: (req) => {
      const email = typeof req.body?.email === 'string' ? req.body.email.trim().toLowerCase() : '';
      return `${ipKeyGenerator(req.ip ?? 'unknown')}|${email}`;
    },
    handler: (_req, _res, next) => {
      const minutes = Math.ceil(limit.windowMs / 60000);
      next(new ApiError(429, 'rate_limited', `Too many ${what} attempts; wait ${minutes} minutes and try again.`));
    },
  });
}
