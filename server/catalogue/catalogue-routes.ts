import { Router } from 'express';
import type { z } from 'zod';
import { requireRole } from '../auth/require-role.js';
import type { Db } from '../db/client.js';
import { validate } from '../http/validate.js';
import { sendCatalogueExport, type ExportFormat } from './catalogue-export.js';
import { catalogueFilterSchema, catalogueQuerySchema, toCatalogueFilter, toCataloguePageRequest } from './catalogue-query.js';
import { CatalogueService } from './catalogue-service.js';
import { resonanceRoutes } from './resonance-routes.js';
import { exportedModels } from '../fabrication/catalogue-import.js';

/**
 * The group's resonance catalogue, mounted at /api/groups/:groupId: GET /catalogue (search),
 * /catalogue/export.csv and .json (the whole filtered set), and the /resonances/:id routes.
 * Any member reads; tags and notes need the designer role.
 */
export function catalogueRoutes(deps: { db: Db; service?: CatalogueService }): Router {
  const service = deps.service ?? new CatalogueService(deps.db);
  const router = Router({ mergeParams: true });

  router.get('/catalogue', requireRole(), validate({ query: catalogueQuerySchema }), async (req, res) => {
    const request = toCataloguePageRequest(req.valid.query as z.infer<typeof catalogueQuerySchema>);
    res.json(await service.search(req.membership!.groupId, request));
  });

  for (const format of ['csv', 'json'] as ExportFormat[]) {
    router.get(`/catalogue/export.${format}`, requireRole(), validate({ query: catalogueFilterSchema }), async (req, res) => {
      const filter = toCatalogueFilter(req.valid.query as z.infer<typeof catalogueFilterSchema>);
      // Exports take the group's data away whole: recorded before the first byte goes out.
      const source = await service.exportFor(req.membership!.groupId, req.auth!.user.id, format, filter, req.valid.query as Record<string, unknown>);
      await sendCatalogueExport(res, format, source, new Date(), (ids) => exportedModels(deps.db, req.membership!.groupId, ids));
    });
  }

  router.use(resonanceRoutes(service));
  return router;
}
