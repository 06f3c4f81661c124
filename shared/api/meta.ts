/** Routes about the API itself: is it up, and its OpenAPI description. */
import * as z from 'zod';
import { declareRoute, json, media } from './route.js';

export const healthSchema = z.object({ ok: z.literal(true), version: z.string() }).meta({ id: 'Health' });
export type Health = z.infer<typeof healthSchema>;

export const healthRoute = declareRoute({
  id: 'health',
  method: 'get',
  path: '/health',
  tag: 'meta',
  summary: 'Is the server up, and which version',
  access: 'public',
  answer: json(200, 'Up', healthSchema),
});

export const openApiDocumentRoute = declareRoute({
  id: 'openApiDocument',
  method: 'get',
  path: '/openapi.json',
  tag: 'meta',
  summary: 'This description of the API',
  access: 'public',
  notes: 'Cacheable for 5 minutes; an ETag revalidation answers 304.',
  answer: media(200, 'application/json', 'The OpenAPI 3.1 document', z.object({ openapi: z.string() }).loose()),
});
