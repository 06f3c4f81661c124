import type { RequestHandler } from 'express';
import { buildOpenApiDocument } from './openapi-document.js';

/**
 * GET /api/openapi.json: public, built on the first request (about 0.1 s) and then kept,
 * since it only changes with the code. Express adds an ETag, so a revalidation answers 304.
 */
export function openApiRoute(version: string): RequestHandler {
  let body: string | undefined;
  return (_req, res) => {
    body ??= JSON.stringify(buildOpenApiDocument(version));
    res.setHeader('Cache-Control', 'public, max-age=300');
    res.type('application/json').send(body);
  };
}
