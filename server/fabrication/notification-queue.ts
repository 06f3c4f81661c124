import type PgBoss from 'pg-boss';
import type { Queryable } from '../db/client.js';
import { bossDb } from '../jobs/boss-in-transaction.js';
import { NOTIFICATION_QUEUE, type QueueSpec } from '../jobs/queues.js';

/** The payload of a notification job: the row holds the message. */
export interface NotificationJobData {
  notificationId: string;
}

/** What a service needs to have notifications sent: queue them inside its own transaction. */
export interface NotificationQueue {
  enqueue(q: Queryable, notificationIds: string[]): Promise<void>;
}

/** Jobs are sent through the caller's transaction, so a rolled-back change sends nothing. */
export function notificationQueue(boss: PgBoss, spec: QueueSpec = NOTIFICATION_QUEUE): NotificationQueue {
  return {
    async enqueue(q, ids) {
      for (const notificationId of ids) {
        const id = await boss.send(spec.name, { notificationId } satisfies NotificationJobData, {
          retryLimit: spec.retryLimit,
          retryDelay: spec.retryDelaySeconds,
          retryBackoff: true,
          expireInSeconds: spec.expireInSeconds,
          db: bossDb(q),
        });
        if (!id) throw new Error(`the queue ${spec.name} refused the job`);
      }
    },
  };
}
