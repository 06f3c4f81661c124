/**
 * E-mail notifications the queue gave up on: the list the group's admins see, and sending one
 * again once the mail settings are fixed (a fresh set of queue retries, audited).
 */
import { and, desc, eq } from 'drizzle-orm';
import type { FailedNotification } from '../../shared/api/fabrication.js';
import { writeAudit } from '../audit/audit-log.js';
import type { Db } from '../db/client.js';
import { notifications } from '../db/schema/fabrication.js';
import { ApiError } from '../http/error-handler.js';
import type { NotificationQueue } from './notification-queue.js';

export class FailedNotifications {
  constructor(
    private readonly db: Db,
    private readonly queue: NotificationQueue | null,
  ) {}

  async list(groupId: string): Promise<FailedNotification[]> {
    const rows = await this.db
      .select()
      .from(notifications)
      .where(and(eq(notifications.groupId, groupId), eq(notifications.status, 'failed')))
      .orderBy(desc(notifications.createdAt))
      .limit(200);
    return rows.map((r) => ({
      id: r.id,
      kind: r.kind,
      to: r.toAddress,
      subject: r.subject,
      attempts: r.attempts,
      error: r.error,
      createdAt: r.createdAt.toISOString(),
    }));
  }

  /** Queues a failed notification again; the row and the job are written in one transaction. */
  async retry(groupId: string, id: string, actorId: string): Promise<{ id: string; status: 'queued' }> {
    return this.db.transaction(async (tx) => {
      const [row] = await tx
        .select({ status: notifications.status, to: notifications.toAddress, subject: notifications.subject })
        .from(notifications)
        .where(and(eq(notifications.id, id), eq(notifications.groupId, groupId)))
        .for('update');
      if (!row)
        throw new ApiError(404, 'not_found', 'This group has no such notification (id).', [{ path: 'id', message: 'no such notification in this group' }]);
      if (row.status !== 'failed') {
        throw new ApiError(409, 'not_failed', `Only a failed notification can be sent again; this one is ${row.status}.`, [
          { path: 'id', message: `status is ${row.status}` },
        ]);
      }
      const queue = this.queue;
      if (!queue) throw new ApiError(503, 'queue_unavailable', 'E-mail notifications are not queued by this server process; try again later.');
      await tx.update(notifications).set({ status: 'queued', error: null }).where(eq(notifications.id, id));
      await queue.enqueue(tx, [id]);
      await writeAudit(tx, { groupId, actorId, action: 'notification.retried', subject: row.subject, details: { notificationId: id, to: row.to } });
      return { id, status: 'queued' as const };
    });
  }
}
