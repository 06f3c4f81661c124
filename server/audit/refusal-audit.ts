import type { Request } from 'express';
import { bodyEmail } from '../auth/sign-in-limit.js';
import { findUserByEmail } from '../auth/user-repository.js';
import type { Db } from '../db/client.js';
import type { ApiError, ProblemObserver } from '../http/error-handler.js';
import { recordSecurityEvent } from './security-event.js';

/** Problem codes that are refusals worth keeping: forged-looking requests and rate limits. */
const recorded: Record<string, string> = {
  csrf_failed: 'security.csrf_refused',
  rate_limited: 'security.rate_limited',
};

/**
 * Records CSRF refusals and every 429 (sign-in, reset, link and run limits alike) in the
 * audit log: in the group's activity when the route is a group's, and on the account
 * concerned (the caller, or the account a sign-in or reset named).
 */
export function refusalAudit(db: Db, log: (msg: string, err: unknown) => void): ProblemObserver {
  return async (req: Request, problem: ApiError) => {
    const action = recorded[problem.code];
    if (!action) return;
    await (async () => {
      const email = bodyEmail(req);
      const accountId = req.auth?.user.id ?? (email ? (await findUserByEmail(db, email))?.id : undefined) ?? null;
      await recordSecurityEvent(
        db,
        {
          groupId: req.membership?.groupId ?? null,
          actorId: req.auth?.user.id ?? null,
          accountId,
          action,
          subject: `${req.method} ${req.originalUrl.split('?')[0]}`,
          details: { ip: req.ip, message: problem.message, ...(email ? { email } : {}) },
        },
        log,
      );
    })().catch((err: unknown) => log('[poleward] could not record a refusal:', err));
  };
}
