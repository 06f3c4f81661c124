import type { Router } from 'express';
import type { Config } from '../config.js';
import type { Compute } from '../compute/compute-pool.js';
import type { Db } from '../db/client.js';
import { CatalogueImport, catalogueImportRoutes } from './catalogue-import.js';
import { FabricationPackages } from './fabrication-package.js';
import { fabricationPackageRoutes, fabricationRoutes } from './fabrication-routes.js';
import { FabricationService } from './fabrication-service.js';
import type { NotificationQueue } from './notification-queue.js';
import { failedNotificationRoutes } from './failed-notification-routes.js';
import { FailedNotifications } from './failed-notifications.js';
import { notificationSettingsRoutes } from './notification-settings.js';

/** Mounts every route of the fabrication feature on the /api router (one line in app.ts). */
export function fabricationFeature(api: Router, deps: { db: Db; config: Config; compute: Compute; notifications: NotificationQueue | null }): void {
  const service = new FabricationService(deps.db, deps.config.publicUrl, deps.notifications);
  // Declared routes (shared/api/fabrication.ts) carry their full paths below /api.
  api.use(fabricationRoutes(service));
  api.use(fabricationPackageRoutes(deps.db, new FabricationPackages(deps.db, deps.compute)));
  api.use(failedNotificationRoutes(new FailedNotifications(deps.db, deps.notifications)));
  api.use(catalogueImportRoutes(new CatalogueImport(deps.db, deps.compute)));
  api.use(notificationSettingsRoutes(deps.db));
}
