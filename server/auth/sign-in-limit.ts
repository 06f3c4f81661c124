import type { Request, RequestHandler } from 'express';
import { ipKeyGenerator, rateLimit } from 'express-rate-limit';
import { ApiError } from '../http/error-handler.js';

export interface AttemptLimit {
  /** Attempts allowed per window. */
  max: number;
  windowMs: number;
}

/** One limit per account (the e-mail of the body) and one per client IP, counted apart. */
export interface AttemptLimits {
  perAccount: AttemptLimit;
  perIp: AttemptLimit;
}

const quarterHour = 15 * 60 * 1000;

/**
 * Failed sign-ins: 10 per account and 30 per IP in 15 minutes. The account limit stops
 * guessing one password; the IP limit stops trying one password on many accounts.
 * Successful sign-ins do not count.
 */
export const defaultSignInLimits: AttemptLimits = { perAccount: { max: 10, windowMs: quarterHour }, perIp: { max: 30, windowMs: quarterHour } };

/** Password-reset requests (each may send a mail): 5 per e-mail and 20 per IP in 15 minutes, all counted. */
export const defaultResetRequestLimits: AttemptLimits = { perAccount: { max: 5, windowMs: quarterHour }, perIp: { max: 20, windowMs: quarterHour } };

/** Failed uses of reset and invitation links (each success consumes its link): 10 per IP in 15 minutes. */
export const defaultLinkLimit: AttemptLimit = { max: 10, windowMs: quarterHour };

type LimitKey = 'account' | 'ip';

/** The lower-cased e-mail of the body, or '' when it has none. */
export function bodyEmail(req: Request): string {
  const email: unknown = (req.body as { email?: unknown } | undefined)?.email;
  return typeof email === 'string' ? email.trim().toLowerCase() : '';
}

/**
 * A limiter on one key (express-rate-limit, in memory: one API process, and a restart only
 * forgives). `failuresOnly` counts only answers of 400 and above. The 429 says when to
 * come back (also in Retry-After); the error handler records it in the audit log.
 */
export function attemptLimiter(opts: { limit: AttemptLimit; what: string; per: LimitKey; failuresOnly: boolean }): RequestHandler {
  const { limit, what, per } = opts;
  return rateLimit({
    windowMs: limit.windowMs,
    limit: limit.max,
    standardHeaders: 'draft-8',
    legacyHeaders: false,
    skipSuccessfulRequests: opts.failuresOnly,
    // IPv6 addresses are grouped by /56, so one host cannot rotate through its prefix.
    keyGenerator: (req) => (per === 'ip' ? ipKeyGenerator(req.ip ?? 'unknown') : bodyEmail(req)),
    skip: (req) => per === 'account' && bodyEmail(req) === '',
    handler: (req, res, next) => {
      const reset = (req as Request & { rateLimit?: { resetTime?: Date } }).rateLimit?.resetTime?.getTime() ?? Date.now() + limit.windowMs;
      const minutes = Math.max(1, Math.ceil((reset - Date.now()) / 60000));
      const whose = per === 'account' ? 'for this account' : 'from your address';
      const refusal = new ApiError(429, 'rate_limited', `Too many ${what} attempts ${whose}; try again in ${minutes} minute${minutes === 1 ? '' : 's'}.`);
      next(refusal);
    },
  });
}

/**
 * The two limiters of one route, the IP's first: a request refused for its address never
 * reaches (and so never counts against) the account it names, so a spraying address
 * cannot lock other people's accounts once it is itself refused.
 */
export function accountAndIpLimiters(limits: AttemptLimits, what: string, failuresOnly: boolean): RequestHandler[] {
  return [
    attemptLimiter({ limit: limits.perIp, what, per: 'ip', failuresOnly }),
    attemptLimiter({ limit: limits.perAccount, what, per: 'account', failuresOnly }),
  ];
}
