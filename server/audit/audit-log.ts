import { auditLog } from '../db/schema/audit.js';
import type { Queryable } from '../db/client.js';

export interface AuditEntry {
  /** Null for account-level events that belong to no group. */
  groupId: string | null;
  actorId: string | null;
  /**
   * The account the event concerns (signed in to, failed to sign in to, whose role
   * changed, whose mail was read); its owner sees the entry on the account page.
   */
  accountId?: string | null;
  /** Dotted verb, e.g. "member.role_changed", "invitation.created". */
  action: string;
  /** What was acted on, in words a person reads in the activity list (an e-mail, a token name). */
  subject: string;
  details?: Record<string, unknown>;
}

/**
 * The audit writer every mutating service calls, inside the same transaction as the
 * change, so the log never claims something that was rolled back (nor misses what was not).
 */
export async function writeAudit(q: Queryable, entry: AuditEntry): Promise<void> {
  await q.insert(auditLog).values({
    groupId: entry.groupId,
    actorId: entry.actorId,
    accountId: entry.accountId ?? null,
    action: entry.action,
    subject: entry.subject,
    details: entry.details ?? {},
  });
}
