import { and, desc, eq, not, like, type SQL } from 'drizzle-orm';
import type { Queryable } from '../db/client.js';
import { auditLog } from '../db/schema/audit.js';
import { users } from '../db/schema/users.js';
import type { ActivityEntry } from '../../shared/api/account.js';

/** Actions of this prefix are refusals (CSRF, rate limits): shown to admins only. */
const securityActionPrefix = 'security.';

async function activity(q: Queryable, where: SQL | undefined, limit: number): Promise<ActivityEntry[]> {
  const rows = await q
    .select({
      id: auditLog.id,
      at: auditLog.at,
      actorId: users.id,
      actorName: users.name,
      action: auditLog.action,
      subject: auditLog.subject,
      details: auditLog.details,
    })
    .from(auditLog)
    .leftJoin(users, eq(users.id, auditLog.actorId))
    .where(where)
    .orderBy(desc(auditLog.at), desc(auditLog.id))
    .limit(limit);
  return rows.map((r) => ({
    id: r.id,
    at: r.at.toISOString(),
    actor: r.actorId && r.actorName !== null ? { id: r.actorId, name: r.actorName } : null,
    action: r.action,
    subject: r.subject,
    details: r.details,
  }));
}

/**
 * A group's audit entries, newest first; uses the (group_id, at desc) index. Security
 * refusals in the group (CSRF, rate limits) are for its admins only.
 */
export function groupActivity(q: Queryable, groupId: string, limit: number, opts: { withSecurity: boolean }): Promise<ActivityEntry[]> {
  const inGroup = eq(auditLog.groupId, groupId);
  return activity(q, opts.withSecurity ? inGroup : and(inGroup, not(like(auditLog.action, `${securityActionPrefix}%`))), limit);
}

/** Entries about one account (sign-ins, failures, sign-outs, resets, tokens, mail read), newest first. */
export function accountActivity(q: Queryable, userId: string, limit: number): Promise<ActivityEntry[]> {
  return activity(q, eq(auditLog.accountId, userId), limit);
}
