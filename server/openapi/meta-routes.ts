import { createHash } from 'node:crypto';
import { Router } from 'express';
import { healthRoute, openApiDocumentRoute } from '../../shared/api/meta.js';
import { mountRoute } from '../http/mount-route.js';
import { buildOpenApiDocument } from './openapi-document.js';

/** GET /api/health and GET /api/openapi.json. */
export function metaRoutes(version: string): Router {
  const router = Router();
  mountRoute(router, healthRoute, () => ({ ok: true as const, version }));

  // Built on the first request (about 0.1 s) and then kept, since it only changes with the
  // code. It carries its ETag (the app computes none by itself), so a revalidation answers 304.
  let document: { text: string; etag: string } | undefined;
  mountRoute(router, openApiDocumentRoute, (_input, _req, res) => {
    if (!document) {
      const text = JSON.stringify(buildOpenApiDocument(version));
      document = { text, etag: `"${createHash('sha256').update(text).digest('base64url').slice(0, 27)}"` };
    }
    res.setHeader('Cache-Control', 'public, max-age=300');
    res.setHeader('ETag', document.etag);
    res.type('application/json').send(document.text);
  });
  return router;
}
