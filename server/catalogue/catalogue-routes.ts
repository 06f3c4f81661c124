import { Router, type Request, type RequestHandler, type Response } from 'express';
import { exportCatalogueCsvRoute, exportCatalogueJsonRoute, searchCatalogueRoute } from '../../shared/api/catalogue.js';
import type { Db } from '../db/client.js';
import { jsonText, mountRoute } from '../http/mount-route.js';
import { sendCatalogueExport, type ExportFormat } from './catalogue-export.js';
import { toCatalogueFilter, toCataloguePageRequest, type CatalogueFilter } from './catalogue-query.js';
import { CatalogueService } from './catalogue-service.js';
import { resonanceRoutes } from './resonance-routes.js';

/** The query string of a request as it came ('' without one). */
function queryString(req: Request): string {
  const at = req.url.indexOf('?');
  return at < 0 ? '' : req.url.slice(at + 1);
}

/**
 * The group's resonance catalogue: GET /catalogue (search), /catalogue/export.csv and .json
 * (the whole filtered set), and the /resonances/:id routes. Any member reads; tags and notes
 * need the designer role.
 */
export function catalogueRoutes(deps: { db: Db; service?: CatalogueService }): Router {
  const service = deps.service ?? new CatalogueService(deps.db);
  const router = Router();

  // A search asked exactly as before, with nothing changed in the group since, is answered
  // from the answers this process keeps, before its query is parsed again (access is checked).
  const keptAnswer: RequestHandler = (req, res, next) => {
    const { groupId, catalogueGeneration } = req.membership!;
    const text = service.keptAnswer(groupId, catalogueGeneration, queryString(req));
    if (text === undefined) return next();
    res.status(200).type('application/json').send(text);
  };
  mountRoute(
    router,
    searchCatalogueRoute,
    async ({ query }, req) => {
      const { groupId, catalogueGeneration } = req.membership!;
      return jsonText(await service.searchText(groupId, toCataloguePageRequest(query), catalogueGeneration, queryString(req)));
    },
    { before: [keptAnswer] },
  );

  // Exports take the group's data away whole: recorded before the first byte goes out.
  async function exportAs(format: ExportFormat, query: Record<string, unknown>, filter: CatalogueFilter, req: Request, res: Response): Promise<void> {
    const groupId = req.membership!.groupId;
    const source = await service.exportFor(groupId, req.auth!.user.id, format, filter, query);
    await sendCatalogueExport(res, format, source, new Date(), (ids) => service.exportedModels(groupId, ids));
  }
  mountRoute(router, exportCatalogueCsvRoute, ({ query }, req, res) => exportAs('csv', query, toCatalogueFilter(query), req, res));
  mountRoute(router, exportCatalogueJsonRoute, ({ query }, req, res) => exportAs('json', query, toCatalogueFilter(query), req, res));

  router.use(resonanceRoutes(service));
  return router;
}
