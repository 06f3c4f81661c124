import { Router } from 'express';
import { listFailedNotificationsRoute, retryFailedNotificationRoute } from '../../shared/api/fabrication.js';
import { mountRoute } from '../http/mount-route.js';
import type { FailedNotifications } from './failed-notifications.js';

/** /api/groups/:groupId/notifications/failed and …/:id/retry: for the group's admins. */
export function failedNotificationRoutes(service: FailedNotifications): Router {
  const router = Router();
  mountRoute(router, listFailedNotificationsRoute, async (_input, req) => ({ items: await service.list(req.membership!.groupId) }));
  mountRoute(router, retryFailedNotificationRoute, ({ params }, req) => service.retry(req.membership!.groupId, params.id, req.auth!.user.id));
  return router;
}
