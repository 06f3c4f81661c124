import { desc, eq } from 'drizzle-orm';
import type { Queryable } from '../db/client.js';
import { auditLog } from '../db/schema/audit.js';
import { users } from '../db/schema/users.js';

export interface ActivityEntry {
  id: string;
  at: string;
  actor: { id: string; name: string } | null;
  action: string;
  subject: string;
  details: Record<string, unknown>;
}

/** A group's audit entries, newest first; uses the (group_id, at desc) index. */
export async function groupActivity(q: Queryable, groupId: string, limit: number): Promise<ActivityEntry[]> {
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
    .where(eq(auditLog.groupId, groupId))
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
