import type { Queryable } from '../db/client.js';
import { writeAudit, type AuditEntry } from './audit-log.js';

/**
 * Records an event that changes nothing (a refusal, a read, a failed sign-in), so there is
 * no transaction to join. A failure to record is logged and does not change the answer
 * the caller gets: a database hiccup must not turn a 401 or 429 into a 500.
 */
export async function recordSecurityEvent(q: Queryable, entry: AuditEntry, log: (msg: string, err: unknown) => void = console.error): Promise<void> {
  try {
    await writeAudit(q, entry);
  } catch (err) {
    log(`[poleward] could not record the audit entry ${entry.action}:`, err);
  }
}
