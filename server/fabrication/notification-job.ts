/**
 * Sends one queued notification. Idempotent: a sent row is never sent again. A failure is
 * recorded on the row and rethrown so pg-boss retries it; the last failure marks the row
 * failed, where the group's admins see it (GET /groups/:groupId/notifications/failed).
 */
import { and, eq, sql } from 'drizzle-orm';
import type PgBoss from 'pg-boss';
import type { Db } from '../db/client.js';
import { notifications } from '../db/schema/fabrication.js';
import { NOTIFICATION_QUEUE } from '../jobs/queues.js';
import type { Mailer } from '../mail/mailer.js';
import type { NotificationJobData } from './notification-queue.js';

async function sendNotification(db: Db, mailer: Mailer, notificationId: string, lastTry: boolean): Promise<void> {
  const [row] = await db.select().from(notifications).where(eq(notifications.id, notificationId));
  if (!row || row.status !== 'queued') return;
  try {
    await mailer.send({ to: row.toAddress, subject: row.subject, text: row.textBody, html: row.htmlBody });
  } catch (err) {
    const message = err instanceof Error ? err.message : String(err);
    await db
      .update(notifications)
      .set({ attempts: sql`${notifications.attempts} + 1`, error: message, status: lastTry ? 'failed' : 'queued' })
      .where(eq(notifications.id, notificationId));
    throw err;
  }
  await db
    .update(notifications)
    .set({ attempts: sql`${notifications.attempts} + 1`, status: 'sent', sentAt: new Date(), error: null })
    .where(and(eq(notifications.id, notificationId), eq(notifications.status, 'queued')));
}

/** Subscribes this process to the `notification` queue (the API process runs it: it holds the mailer). */
export async function startNotificationWorker(o: {
  db: Db;
  boss: PgBoss;
  mailer: Mailer;
  pollingIntervalSeconds?: number;
}): Promise<{ stop: () => Promise<void> }> {
  const id = await o.boss.work<NotificationJobData>(
    NOTIFICATION_QUEUE.name,
    { batchSize: 1, pollingIntervalSeconds: o.pollingIntervalSeconds ?? 2, includeMetadata: true },
    async ([job]) => {
      const meta = job as PgBoss.JobWithMetadata<NotificationJobData>;
      await sendNotification(o.db, o.mailer, job.data.notificationId, meta.retryCount >= meta.retryLimit);
    },
  );
  return {
    async stop() {
      await o.boss.offWork({ id }).catch(() => {});
    },
  };
}
