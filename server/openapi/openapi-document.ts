/**
 * The OpenAPI 3.1 description of /api, generated from the route declarations in shared/api
 * (method, path, access rule, request and answer schemas). Nothing here is written twice:
 * a new route is described as soon as it is declared and added to shared/api/routes.ts.
 * tests/server/openapi.test.ts compares it with the routes Express has mounted.
 */
import { extendZodWithOpenApi, OpenAPIRegistry, OpenApiGeneratorV31, type RouteConfig } from '@asteasolutions/zod-to-openapi';
import * as z from 'zod';
import type { Access } from '../../shared/api/enums.js';
import { problemSchema } from '../../shared/api/fields.js';
import type { RouteDeclaration } from '../../shared/api/route.js';
import { apiRoutes } from '../../shared/api/routes.js';

// The generator calls .openapi() on every path and query parameter. zod 4 copies prototype methods
// onto each schema when it is built, so schemas imported above lack it: asParameters clones them.
extendZodWithOpenApi(z);

/** The same fields, rebuilt after the extension; object-level refinements do not matter for parameters. */
function asParameters(o: z.ZodObject): z.ZodObject {
  return z.object(Object.fromEntries(Object.entries(o.shape).map(([k, v]) => [k, (v as z.ZodType).clone()])));
}

/** What the document says about each access rule, at the head of every operation's description. */
export const accessText: Record<Access, string> = {
  public: 'Public: no sign-in needed.',
  'signed-in': 'Needs a signed-in user (session cookie, or a personal token as bearer).',
  member: 'Needs membership of the group, any role. Not a member, or no such group: 404.',
  designer: 'Needs the designer role in the group (admin passes every role check). Not a member: 404.',
  analyst: 'Needs the designer role or the reviewer role in the group (admin passes every role check). Not a member: 404.',
  admin: 'Needs the admin role in the group. Not a member: 404.',
  operator: 'Only for the site operator, and only while the local mail stand-in is the transport; 404 otherwise (also to group admins).',
};

const routes = apiRoutes;

const problemContent = { 'application/json': { schema: problemSchema } };

/** Error answers every route of this access level and input can give, plus the route's own. */
export function errorAnswers(op: RouteDeclaration): Record<number, string> {
  const out: Record<number, string> = {};
  if (op.params || op.query || op.body) out[400] = 'validation_failed: see issues';
  if (op.access !== 'public') out[401] = 'unauthenticated: not signed in, session expired, or unknown API token';
  if (op.method !== 'get' && op.access !== 'public') out[403] = 'csrf_failed: cookie request without a matching X-CSRF-Token';
  if (op.access === 'designer' || op.access === 'admin' || op.access === 'analyst') out[403] = 'forbidden: the role is missing; or csrf_failed';
  if (op.access === 'member' || op.access === 'designer' || op.access === 'admin' || op.access === 'analyst' || op.access === 'operator' || op.params) {
    out[404] = 'not_found (also for objects of a group you are not in)';
  }
  return { ...out, ...op.errors };
}

/** The request body as the document shows it: JSON, multipart with the file, or the file itself. */
function requestBody(op: RouteDeclaration): { mediaType: string; schema: z.ZodType } | null {
  if (op.upload) {
    const fields = (op.described?.body ?? op.body) as z.ZodObject | undefined;
    const file = z.string().meta({ contentMediaType: op.upload.mediaType, description: op.upload.description });
    return { mediaType: 'multipart/form-data', schema: (fields ? asParameters(fields) : z.object({})).extend({ [op.upload.field]: file }) };
  }
  if (op.rawBody) {
    return { mediaType: op.rawBody.mediaType, schema: op.described?.body ?? z.string().meta({ format: 'binary', description: op.rawBody.description }) };
  }
  const body = op.described?.body ?? op.body;
  return body ? { mediaType: 'application/json', schema: body } : null;
}

function routeConfig(op: RouteDeclaration): RouteConfig {
  const a = op.answer;
  const responses: RouteConfig['responses'] = {
    [a.status]: {
      description: a.description,
      ...(a.kind === 'empty' ? {} : { content: { [a.kind === 'media' ? a.mediaType : 'application/json']: { schema: a.schema } } }),
    },
  };
  for (const [status, description] of Object.entries(errorAnswers(op))) {
    responses[status] = Number(status) === 304 ? { description } : { description, content: problemContent };
  }
  responses.default = { description: 'Any other error, as a problem (429 rate_limited, 413 payload_too_large, 500 internal...)', content: problemContent };
  const params = op.described?.params ?? (op.params as z.ZodObject | undefined);
  const query = op.described?.query ?? (op.query as z.ZodObject | undefined);
  const body = requestBody(op);

  return {
    method: op.method,
    path: `/api${op.path}`,
    operationId: op.id,
    tags: [op.tag],
    summary: op.summary,
    description: [accessText[op.access], op.notes].filter(Boolean).join(' '),
    security:
      op.access === 'public'
        ? []
        : op.method !== 'get'
          ? [{ sessionCookie: [], csrfHeader: [] }, { personalToken: [] }]
          : [{ sessionCookie: [] }, { personalToken: [] }],
    request: {
      ...(params ? { params: asParameters(params) } : {}),
      ...(query ? { query: asParameters(query) } : {}),
      ...(body ? { body: { required: true, content: { [body.mediaType]: { schema: body.schema } } } } : {}),
    },
    responses,
  };
}

/** Builds the whole document. Pure; about 0.1 s on this machine, so the route builds it once per process. */
export function buildOpenApiDocument(version: string): ReturnType<OpenApiGeneratorV31['generateDocument']> {
  const registry = new OpenAPIRegistry();
  registry.registerComponent('securitySchemes', 'sessionCookie', {
    type: 'apiKey',
    in: 'cookie',
    name: 'pw_session',
    description: 'Set by POST /api/auth/sign-in (HttpOnly, 12 hours). Unsafe methods also need csrfHeader.',
  });
  registry.registerComponent('securitySchemes', 'csrfHeader', {
    type: 'apiKey',
    in: 'header',
    name: 'X-CSRF-Token',
    description: 'The pw_csrf cookie value (also Session.csrfToken), repeated on POST, PUT, PATCH and DELETE made with the session cookie.',
  });
  registry.registerComponent('securitySchemes', 'personalToken', {
    type: 'http',
    scheme: 'bearer',
    description: 'A personal API token (pwt_…) from POST /api/tokens; no CSRF header needed.',
  });
  for (const op of routes) registry.registerPath(routeConfig(op));

  return new OpenApiGeneratorV31(registry.definitions).generateDocument({
    openapi: '3.1.0',
    info: {
      title: 'Poleward API',
      version,
      description:
        'Finds and catalogues the resonances z = E − iΓ/2 of open cavities. Energies and widths in meV, lifetimes in ps, ' +
        'lengths in nm, field in T. Errors are JSON problems { status, code, message, issues? }. Objects of a group you ' +
        'are not a member of answer 404, exactly like missing ones. See docs/api.md.',
    },
    security: [{ sessionCookie: [] }, { personalToken: [] }],
    tags: [
      { name: 'meta' },
      { name: 'auth', description: 'Sign-in, session, password reset' },
      { name: 'invitations', description: 'The public side of invitation links' },
      { name: 'groups', description: 'Groups, members, invitations, activity' },
      { name: 'models', description: 'Versioned cavity models' },
      { name: 'runs', description: 'Pole searches and transmission sweeps' },
      { name: 'catalogue', description: 'The resonance catalogue' },
      { name: 'tokens', description: 'Personal API tokens' },
      { name: 'account', description: "The caller's own account: its activity" },
      { name: 'outbox', description: 'The local mail stand-in' },
      { name: 'fits', description: 'Measured traces and peak fits' },
    ],
  });
}
