import { Router } from 'express';
import { healthRoute, openApiDocumentRoute } from '../../shared/api/meta.js';
import { mountRoute } from '../http/mount-route.js';
import { buildOpenApiDocument } from './openapi-document.js';

/** GET /api/health and GET /api/openapi.json. */
export function metaRoutes(version: string): Router {
  const router = Router();
  mountRoute(router, healthRoute, () => ({ ok: true as const, version }));

  // Built on the first request (about 0.1 s) and then kept, since it only changes with the
  // code. Express adds an ETag, so a revalidation answers 304.
  let document: string | undefined;
  mountRoute(router, openApiDocumentRoute, (_input, _req, res) => {
    document ??= JSON.stringify(buildOpenApiDocument(version));
    res.setHeader('Cache-Control', 'public, max-age=300');
    res.type('application/json').send(document);
  });
  return router;
}
