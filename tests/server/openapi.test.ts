// The OpenAPI description: served in public, OpenAPI 3.1 in shape, covering exactly the
// routes Express has mounted, with request schemas that judge model documents like the
// zod schemas, and answer schemas that fit what the API really sends.
import Ajv2020, { type ValidateFunction } from 'ajv/dist/2020.js';
import addFormats from 'ajv-formats';
import { eq } from 'drizzle-orm';
import express, { Router, type Express } from 'express';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { resonances } from '../../server/db/schema/catalogue.js';
import { runs } from '../../server/db/schema/runs.js';
import { runRequestSchema } from '../../shared/api/runs.js';
import { cavityModelSchema } from '../../shared/model/cavity-model.js';
import { createLab, type Lab } from './lab-fixture.js';
import { smallRectangle, smallWindow } from './fixtures/small-cavity.js';
import { signInAs, type SignedIn } from './sign-in-as.js';
import { mountedRoutes, type Layer } from './mounted-routes.js';
import { startTestApp, type TestApp } from './test-app.js';

// The served document is plain JSON, walked by key; typing every OpenAPI object here would add nothing.
// eslint-disable-next-line @typescript-eslint/no-explicit-any -- see above
type Json = Record<string, any>;

let app: TestApp;
let doc: Json;
let lab: Lab;
let designer: SignedIn;
let admin: SignedIn;

beforeAll(async () => {
  app = await startTestApp();
  const res = await request(app.server).get('/api/openapi.json');
  doc = res.body as Json;
  lab = await createLab(app.handle.db, ['admin', 'designer']);
  admin = await signInAs(app, lab.as('admin').email);
  designer = await signInAs(app, lab.as('designer').email);
});
afterAll(() => app?.close());

const methods = ['get', 'put', 'post', 'delete', 'options', 'head', 'patch', 'trace'] as const;

function operations(): { method: string; path: string; op: Json }[] {
  return Object.entries(doc.paths as Json).flatMap(([path, item]) =>
    methods.filter((m) => item[m]).map((method) => ({ method, path, op: item[method] as Json })),
  );
}

// ---- JSON Schema checks against the served document (ajv, draft 2020-12 as OpenAPI 3.1 uses)

function ajvFor(document: Json): Ajv2020 {
  // strict off: an OpenAPI document has keywords (paths, components...) a bare JSON Schema does not.
  const ajv = new Ajv2020({ strict: false, allErrors: true });
  addFormats(ajv);
  ajv.addSchema({ ...document, $id: 'poleward-api' });
  return ajv;
}

/** The compiled schema at a JSON pointer into the document, e.g. ['components', 'schemas', 'CavityModel']. */
function schemaAt(ajv: Ajv2020, pointer: string[]): ValidateFunction {
  const fragment = pointer.map((p) => encodeURIComponent(p.replace(/~/g, '~0').replace(/\//g, '~1'))).join('/');
  const validate = ajv.getSchema(`poleward-api#/${fragment}`);
  if (!validate) throw new Error(`no schema at ${pointer.join(' / ')}`);
  return validate;
}

/** A copy where every described object refuses undescribed fields, so an answer with extra fields fails. */
function closedObjects(node: unknown): unknown {
  if (Array.isArray(node)) return node.map(closedObjects);
  if (node === null || typeof node !== 'object') return node;
  const out: Json = Object.fromEntries(Object.entries(node).map(([k, v]) => [k, closedObjects(v)]));
  if (out.properties && out.additionalProperties === undefined) out.additionalProperties = false;
  return out;
}

describe('GET /api/openapi.json', () => {
  it('answers 200 without sign-in, cacheable, and 304 for a copy that is still current', async () => {
    const res = await request(app.server).get('/api/openapi.json');
    expect(res.status).toBe(200);
    expect(res.headers['content-type']).toMatch(/^application\/json/);
    expect(res.headers['cache-control']).toMatch(/public, max-age=\d+/);
    const etag = res.headers['etag'] as string;
    expect(etag).toBeTruthy();
    const again = await request(app.server).get('/api/openapi.json').set('If-None-Match', etag);
    expect(again.status).toBe(304);
  });

  it('is an OpenAPI 3.1 document in shape: version, info, paths, operations, parameters, refs, security', () => {
    expect(doc.openapi).toMatch(/^3\.1\.\d+$/);
    expect(doc.info.title).toBe('Poleward API');
    expect(doc.info.version).toBe(app.config.version);
    expect(Object.keys(doc.paths).length).toBeGreaterThan(0);

    const ids = new Set<string>();
    const schemes = doc.components.securitySchemes as Json;
    expect(schemes.sessionCookie).toMatchObject({ type: 'apiKey', in: 'cookie', name: 'pw_session' });
    expect(schemes.csrfHeader).toMatchObject({ type: 'apiKey', in: 'header', name: 'X-CSRF-Token' });
    expect(schemes.personalToken).toMatchObject({ type: 'http', scheme: 'bearer' });

    for (const { method, path, op } of operations()) {
      const where = `${method} ${path}`;
      expect(path, where).toMatch(/^\/api\//);
      expect(typeof op.operationId, where).toBe('string');
      expect(ids.has(op.operationId), `${where}: operationId ${op.operationId} twice`).toBe(false);
      ids.add(op.operationId);
      expect(op.summary, where).toBeTruthy();
      // OpenAPI: every {name} in the path is a required path parameter, and there are no others.
      const templated = [...path.matchAll(/\{(\w+)\}/g)].map((m) => m[1]).sort();
      const inPath = ((op.parameters ?? []) as Json[]).filter((p) => p.in === 'path');
      expect(inPath.map((p) => p.name).sort(), where).toEqual(templated);
      for (const p of inPath) expect(p.required, `${where} ${p.name}`).toBe(true);
      const success = Object.keys(op.responses).filter((s) => /^2\d\d$/.test(s));
      expect(success.length, `${where} has no success answer`).toBe(1);
      expect(op.responses.default.content['application/json'].schema.$ref, where).toBe('#/components/schemas/Problem');
      for (const requirement of op.security ?? doc.security) {
        for (const name of Object.keys(requirement)) expect(schemes[name], `${where} security ${name}`).toBeDefined();
      }
    }

    // Every $ref points into the document.
    const refs = JSON.stringify(doc).match(/"\$ref":"[^"]+"/g) ?? [];
    expect(refs.length).toBeGreaterThan(0);
    for (const ref of new Set(refs)) {
      const name = /^"\$ref":"#\/components\/schemas\/([^"]+)"$/.exec(ref)?.[1];
      expect(name, ref).toBeDefined();
      expect(doc.components.schemas[name!], ref).toBeDefined();
    }
  });

  it('the route walk finds routes of nested routers below mount paths with parameters', () => {
    const outer = express();
    const feature = Router({ mergeParams: true });
    const nested = Router({ mergeParams: true });
    nested.get('/items/:itemId', (_req, res) => void res.end());
    feature.use((_req, _res, next) => next());
    feature.post('/', (_req, res) => void res.end());
    feature.use(nested);
    outer.use('/api/things/:thingId', feature);
    expect(mountedRoutes((outer as unknown as { router: { stack: Layer[] } }).router.stack)).toEqual([
      'post /api/things/{thingId}',
      'get /api/things/{thingId}/items/{itemId}',
    ]);
  });

  it('describes every route Express has mounted under /api, and no route it does not have', () => {
    const running = app.server.listeners('request')[0] as Express;
    const mounted = mountedRoutes((running as unknown as { router: { stack: Layer[] } }).router.stack).filter((r) => r.split(' ')[1]!.startsWith('/api/'));
    // The walk itself must see the nested routers (catalogue → resonance routes), or the comparison proves nothing.
    expect(mounted).toContain('get /api/groups/{groupId}/resonances/{id}/mode.png');
    const described = operations().map(({ method, path }) => `${method} ${path}`);
    expect(new Set(mounted).size).toBe(mounted.length);
    expect(
      mounted.filter((r) => !described.includes(r)),
      'mounted but not described',
    ).toEqual([]);
    expect(
      described.filter((r) => !mounted.includes(r)),
      'described but not mounted',
    ).toEqual([]);
  });

  it('says who may call each route and how to authenticate', () => {
    for (const { method, path, op } of operations()) {
      const where = `${method} ${path}`;
      if (op.security.length === 0) {
        expect(op.description, where).toMatch(/^Public/);
        continue;
      }
      if (path.startsWith('/api/groups/{groupId}')) expect(op.description, where).toMatch(/^Needs (membership of the group|the (designer|admin) role)/);
      const cookie = (op.security as Json[]).find((s) => 'sessionCookie' in s)!;
      // Unsafe cookie requests need the CSRF header; a bearer token alone is always enough.
      expect('csrfHeader' in cookie, where).toBe(method !== 'get');
      expect(op.security, where).toContainEqual({ personalToken: [] });
    }
    const roleOf = (method: string, path: string) => doc.paths[path][method].description as string;
    expect(roleOf('post', '/api/groups/{groupId}/runs')).toMatch(/designer role/);
    expect(roleOf('patch', '/api/groups/{groupId}/members/{userId}')).toMatch(/admin role/);
    expect(roleOf('get', '/api/groups/{groupId}/catalogue')).toMatch(/membership of the group, any role/);
  });
});

describe('request schemas in the document', () => {
  const base = smallRectangle('Sample');
  const modelSamples: [string, unknown][] = [
    ['the rectangle of the API tests', base],
    [
      'a disk with a hole cut out of a union',
      {
        ...base,
        shape: {
          kind: 'subtract',
          from: { kind: 'union', of: [{ kind: 'disk', cx: 70, cy: 50, radius: 40 }, base.shape] },
          remove: [{ kind: 'ellipse', cx: 70, cy: 50, rx: 5, ry: 3, angleDeg: 30 }],
        },
      },
    ],
    [
      'a custom effective mass, a field and potential terms',
      {
        ...base,
        material: { effectiveMass: 0.05 },
        field: 0.5,
        potential: [
          { kind: 'gaussian', cx: 50, cy: 50, sigma: 10, amplitude: -2 },
          { kind: 'disorder', strength: 1, seed: 7 },
        ],
      },
    ],
    ['no name', { ...base, name: undefined }],
    ['a negative spacing', { ...base, spacing: -5 }],
    ['a shape kind that does not exist', { ...base, shape: { kind: 'hexagon', size: 3 } }],
    [
      'a polygon with two vertices',
      {
        ...base,
        shape: {
          kind: 'polygon',
          vertices: [
            [0, 0],
            [1, 1],
          ],
        },
      },
    ],
    ['an empty union', { ...base, shape: { kind: 'union', of: [] } }],
    ['a bad disk deep inside a subtraction', { ...base, shape: { kind: 'subtract', from: base.shape, remove: [{ kind: 'disk', cx: 1, cy: 1, radius: 0 }] } }],
    ['a lead on a side that does not exist', { ...base, leads: [{ side: 'front', start: 0, width: 3 }] }],
    ['a fractional grid size', { ...base, grid: { nx: 30.5, ny: 20 } }],
    ['a bitmap whose data is not base64', { ...base, shape: { kind: 'bitmap', width: 8, height: 1, data: '!!' } }],
  ];

  it('the cavity model document schema accepts and rejects like the zod schema', () => {
    const validate = schemaAt(ajvFor(doc), ['components', 'schemas', 'CavityModel']);
    let accepted = 0;
    for (const [what, sample] of modelSamples) {
      const zodSays = cavityModelSchema.safeParse(sample).success;
      expect(validate(sample), `${what}: ${JSON.stringify(validate.errors?.slice(0, 2))}`).toBe(zodSays);
      if (zodSays) accepted++;
    }
    // Both verdicts occur, so the comparison can fail either way.
    expect(accepted).toBe(3);
    expect(Object.keys(doc.components.schemas.CavityModel.properties).sort()).toEqual(Object.keys(cavityModelSchema.shape).sort());
  });

  it('model routes take the document under "document", and the run request schema judges like the zod one', () => {
    const createBody = doc.paths['/api/groups/{groupId}/models'].post.requestBody.content['application/json'].schema;
    expect(createBody.properties.document.$ref).toBe('#/components/schemas/CavityModel');
    expect(createBody.required).toContain('document');

    const validate = schemaAt(ajvFor(doc), ['components', 'schemas', 'RunRequest']);
    const modelId = '00000000-0000-4000-8000-000000000001';
    const samples = [
      { kind: 'pole-search', modelId, window: smallWindow },
      { kind: 'transmission', modelId, version: 2, window: { emin: 1, emax: 5, points: 400 } },
      { kind: 'transmission', modelId, window: smallWindow },
      { kind: 'pole-search', modelId, window: { ...smallWindow, gammaMax: -1 } },
      { kind: 'sweep', modelId, window: smallWindow },
      { kind: 'pole-search', modelId: 'not-a-uuid', window: smallWindow },
    ];
    expect(samples.map((s) => validate(s))).toEqual(samples.map((s) => runRequestSchema.safeParse(s).success));
    expect(samples.filter((s) => validate(s)).length).toBe(2);
  });
});

describe('answer schemas in the document', () => {
  it('fit what the API really answers, field for field', async () => {
    const ajv = ajvFor(closedObjects(doc) as Json);
    const check = (method: string, path: string, res: request.Response) => {
      const where = `${method} ${path} → ${res.status} ${JSON.stringify(res.body).slice(0, 300)}`;
      const answer = doc.paths[path]?.[method]?.responses?.[String(res.status)];
      expect(answer, where).toBeDefined();
      const validate = schemaAt(ajv, ['paths', path, method, 'responses', String(res.status), 'content', 'application/json', 'schema']);
      expect(validate(res.body), `${where}: ${JSON.stringify(validate.errors?.slice(0, 3))}`).toBe(true);
    };
    const g = `/api/groups/${lab.groupId}`;

    check('get', '/api/health', await request(app.server).get('/api/health'));
    check('get', '/api/auth/session', await designer.get('/api/auth/session'));
    check('get', '/api/groups', await designer.get('/api/groups'));
    check('get', '/api/groups/{groupId}', await designer.get(g));
    check('get', '/api/groups/{groupId}/members', await designer.get(`${g}/members`));
    check('post', '/api/groups/{groupId}/invitations', await admin.post(`${g}/invitations`, { email: `new.${Date.now()}@fixture.example`, role: 'viewer' }));
    check('get', '/api/groups/{groupId}/invitations', await admin.get(`${g}/invitations`));
    check('get', '/api/groups/{groupId}/activity', await admin.get(`${g}/activity`));

    const created = await designer.post(`${g}/models`, { document: smallRectangle('Described') });
    check('post', '/api/groups/{groupId}/models', created);
    const modelId = created.body.id as string;
    check('get', '/api/groups/{groupId}/models', await designer.get(`${g}/models`));
    check('post', '/api/groups/{groupId}/models/validate', await designer.post(`${g}/models/validate`, { document: smallRectangle('Checked') }));
    check('get', '/api/groups/{groupId}/models/{modelId}/versions/{version}', await designer.get(`${g}/models/${modelId}/versions/1`));
    check(
      'put',
      '/api/groups/{groupId}/models/{modelId}',
      await designer.agent
        .put(`${g}/models/${modelId}`)
        .set('X-CSRF-Token', designer.csrf)
        .send({ document: smallRectangle('Described', { field: 1 }) }),
    );

    const runBody = { kind: 'pole-search', modelId, window: smallWindow };
    check('post', '/api/groups/{groupId}/runs/estimate', await designer.post(`${g}/runs/estimate`, runBody));
    const run = await designer.post(`${g}/runs`, runBody);
    check('post', '/api/groups/{groupId}/runs', run);
    check('get', '/api/groups/{groupId}/runs', await designer.get(`${g}/runs`));
    check('get', '/api/groups/{groupId}/runs/{runId}', await designer.get(`${g}/runs/${run.body.id}`));
    check('post', '/api/groups/{groupId}/runs/{runId}/cancel', await designer.post(`${g}/runs/${run.body.id}/cancel`));

    // Two catalogued poles of that run, as the worker would store them: one decaying, one bound.
    const [runRow] = await app.handle.db.select().from(runs).where(eq(runs.id, run.body.id));
    const pole = (idx: number, energy: number, width: number) => ({
      groupId: lab.groupId,
      runId: runRow!.id,
      modelId,
      modelVersionId: runRow!.modelVersionId,
      idx,
      energy,
      width,
      // τ = ħ/Γ with ħ = 0.6582119569 meV·ps (CODATA 2018); Q = E/Γ. Only the shape of the answer is checked here.
      lifetimePs: width > 0 ? 0.6582119569 / width : null,
      quality: width > 0 ? energy / width : null,
      partialWidths: [
        { lead: 'source', width: width / 2 },
        { lead: 'drain', width: width / 2 },
      ],
      petermann: 1.02,
      residual: 1e-12,
      bound: width === 0,
      nearThreshold: false,
      overlapping: false,
      modelName: 'Described',
      modelVersion: 2,
      family: 'rectangle',
      material: 'gaas',
      fieldT: 1,
      spacingNm: 5,
      widthNm: 150,
      heightNm: 100,
    });
    const [decaying] = await app.handle.db
      .insert(resonances)
      .values([pole(0, 3.5, 0.02), pole(1, 4.2, 0)])
      .returning({ id: resonances.id });
    const page = await designer.get(`${g}/catalogue?emin=1&sort=width`);
    expect(page.body.items).toHaveLength(2);
    check('get', '/api/groups/{groupId}/catalogue', page);
    check('get', '/api/groups/{groupId}/catalogue/export.json', await designer.get(`${g}/catalogue/export.json?bound=false`));
    check('get', '/api/groups/{groupId}/resonances/{id}', await designer.get(`${g}/resonances/${decaying!.id}`));
    check(
      'patch',
      '/api/groups/{groupId}/resonances/{id}',
      await designer.patch(`${g}/resonances/${decaying!.id}`, { tags: ['candidate'], notes: 'from the notebook' }),
    );
    check('get', '/api/groups/{groupId}/runs/{runId}', await designer.get(`${g}/runs/${run.body.id}`));

    check('post', '/api/tokens', await designer.post('/api/tokens', { name: 'notebook' }));
    check('get', '/api/tokens', await designer.get('/api/tokens'));

    // Errors are problems, described for the statuses the route gives.
    check('post', '/api/groups/{groupId}/models', await designer.post(`${g}/models`, { document: { ...smallRectangle('Bad'), spacing: -1 } }));
    check('get', '/api/groups/{groupId}/runs/{runId}', await designer.get(`${g}/runs/00000000-0000-4000-8000-000000000009`));
    check('get', '/api/auth/session', await request(app.server).get('/api/auth/session'));
  });
});
