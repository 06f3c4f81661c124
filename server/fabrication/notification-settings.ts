import { and, eq, inArray } from 'drizzle-orm';
import { Router } from 'express';
import {
  NOTIFICATION_KINDS,
  NOTIFICATION_KIND_WORDS,
  getNotificationSettingsRoute,
  setNotificationSettingsRoute,
  type NotificationKind,
  type NotificationSettings,
} from '../../shared/api/fabrication.js';
import { writeAudit } from '../audit/audit-log.js';
import { signedInUser } from '../auth/authenticate.js';
import type { Db, Queryable } from '../db/client.js';
import { notificationOptOuts } from '../db/schema/fabrication.js';
import { mountRoute } from '../http/mount-route.js';

async function notificationSettings(q: Queryable, userId: string): Promise<NotificationSettings> {
  const off = await q.select({ kind: notificationOptOuts.kind }).from(notificationOptOuts).where(eq(notificationOptOuts.userId, userId));
  const offKinds = new Set(off.map((o) => o.kind));
  return { kinds: NOTIFICATION_KINDS.map((kind) => ({ kind, label: NOTIFICATION_KIND_WORDS[kind], enabled: !offKinds.has(kind) })) };
}

/** /api/account/notifications: each user turns each kind of e-mail on or off for themselves. */
export function notificationSettingsRoutes(db: Db): Router {
  const router = Router();
  mountRoute(router, getNotificationSettingsRoute, (_input, req) => notificationSettings(db, signedInUser(req).id));
  mountRoute(router, setNotificationSettingsRoute, async ({ body }, req) => {
    const user = signedInUser(req);
    const entries = Object.entries(body.enabled) as [NotificationKind, boolean][];
    return db.transaction(async (tx) => {
      const on = entries.filter(([, v]) => v).map(([k]) => k);
      const off = entries.filter(([, v]) => !v).map(([k]) => k);
      if (on.length) await tx.delete(notificationOptOuts).where(and(eq(notificationOptOuts.userId, user.id), inArray(notificationOptOuts.kind, on)));
      if (off.length)
        await tx
          .insert(notificationOptOuts)
          .values(off.map((kind) => ({ userId: user.id, kind })))
          .onConflictDoNothing();
      await writeAudit(tx, {
        groupId: null,
        actorId: user.id,
        accountId: user.id,
        action: 'notifications.changed',
        subject: 'e-mail notification settings',
        details: { enabled: body.enabled },
      });
      return notificationSettings(tx, user.id);
    });
  });
  return router;
}
