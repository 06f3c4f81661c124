// Property-based tests (fast-check) over the API's JSON bodies, queries and uploads
// (issue 7, "Tests that keep it closed"): whatever arrives, the answer is a 2xx or a 4xx
// with a message (never a 5xx), a refused request leaves every table as it was, and the
// event loop keeps answering health checks throughout.
//
// Runs per route: POLEWARD_FUZZ_RUNS (default 10, about a minute for the whole file on
// the 2-core development machine; try 200 before a release).
import { monitorEventLoopDelay } from 'node:perf_hooks';
import { randomUUID } from 'node:crypto';
import fc from 'fast-check';
import { sql } from 'drizzle-orm';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createLab, type Lab } from './lab-fixture.js';
import { signInAs, type SignedIn } from './sign-in-as.js';
import { startTestApp, type TestApp } from './test-app.js';
import { smallRectangle, smallWindow } from './fixtures/small-cavity.js';

const RUNS = Number(process.env.POLEWARD_FUZZ_RUNS ?? 10);

let app: TestApp;
let lab: Lab;
let admin: SignedIn;
let designer: SignedIn;
let modelId: string;
const healthTimes: number[] = [];
let healthTimer: NodeJS.Timeout | undefined;
const loopDelay = monitorEventLoopDelay({ resolution: 10 });

beforeAll(async () => {
  app = await startTestApp();
  lab = await createLab(app.handle.db, ['admin', 'designer']);
  admin = await signInAs(app, lab.as('admin').email);
  designer = await signInAs(app, lab.as('designer').email);
  const created = await designer.post(`/api/groups/${lab.groupId}/models`, { document: smallRectangle('Fuzz target') });
  modelId = created.body.id;
  // Health is asked every 250 ms for the whole file, on a connection of its own.
  let busy = false;
  healthTimer = setInterval(() => {
    if (busy) return;
    busy = true;
    const t0 = performance.now();
    void request(app.server)
      .get('/api/health')
      .then(() => healthTimes.push(performance.now() - t0))
      .finally(() => (busy = false));
  }, 250);
  loopDelay.enable();
});
afterAll(async () => {
  clearInterval(healthTimer);
  await app?.close();
});

/** Rows of every table a request could write, to check that a refused one wrote nothing. */
async function tableCounts(): Promise<Record<string, number>> {
  const tables = [
    'cavity_models',
    'model_versions',
    'runs',
    'invitations',
    'memberships',
    'users',
    'research_groups',
    'resonances',
    'resonance_fabrication',
    'resonance_comments',
    'notifications',
  ];
  const out: Record<string, number> = {};
  for (const t of tables) {
    const r = await app.handle.db.execute(sql.raw(`select count(*)::int as n from ${t}`));
    out[t] = (r.rows[0] as { n: number }).n;
  }
  return out;
}

interface Answer {
  status: number;
  body: { message?: unknown; code?: unknown };
}

/** The property every answer must have; counts must be unchanged after a refusal. */
async function checkAnswer(what: string, send: () => Promise<Answer>): Promise<boolean> {
  const before = await tableCounts();
  const res = await send();
  if (res.status >= 500) throw new Error(`${what} answered ${res.status}: ${JSON.stringify(res.body)}`);
  if (res.status >= 400) {
    if (typeof res.body?.message !== 'string' || res.body.message.length < 5) {
      throw new Error(`${what} answered ${res.status} without a message: ${JSON.stringify(res.body)}`);
    }
    const after = await tableCounts();
    for (const [t, n] of Object.entries(before)) {
      if (after[t] !== n) throw new Error(`${what} answered ${res.status} but ${t} went from ${n} to ${after[t]} rows`);
    }
  }
  return true;
}

/** JSON values with odd corners: deep nesting, long strings, numbers at the edges. */
const oddJson: fc.Arbitrary<unknown> = fc.oneof(
  fc.jsonValue({ maxDepth: 4 }),
  // Deep enough to pass every cap; deeper (10,000 levels) is input-limits.test.ts's case,
  // since fast-check's own printing of a counterexample recurses.
  fc.integer({ min: 1, max: 400 }).map((depth) => {
    let v: unknown = { kind: 'rectangle', x0: 0, y0: 0, width: 10, height: 10 };
    for (let k = 0; k < depth; k++) v = k % 2 ? { kind: 'union', of: [v] } : [v];
    return v;
  }),
  fc.constantFrom(1e308, -1e308, Number.MAX_SAFE_INTEGER, -0, 0.5, '', 'x'.repeat(100_000), null, true, [], {}),
);

/** A valid body with one field replaced by an odd value (or removed), so the checks past the first are reached. */
function mutate(valid: Record<string, unknown>): fc.Arbitrary<unknown> {
  const keys = Object.keys(valid);
  return fc.oneof(
    oddJson,
    fc.record({ key: fc.constantFrom(...keys), value: fc.option(oddJson, { nil: undefined }) }).map(({ key, value }) => ({ ...valid, [key]: value })),
    fc.dictionary(fc.string({ maxLength: 12 }), oddJson, { maxKeys: 5 }).map((extra) => ({ ...valid, ...extra })),
  );
}

/** A document with one nested field replaced: reaches the model's own checks. */
const documentBodies: fc.Arbitrary<unknown> = fc.oneof(
  mutate({ document: smallRectangle('x') }),
  mutate(smallRectangle('x')).map((document) => ({ document })),
  fc
    .record({ key: fc.constantFrom('shape', 'grid', 'leads', 'potential', 'spacing', 'material', 'field'), sub: oddJson })
    .map(({ key, sub }) => ({ document: { ...smallRectangle('x'), [key]: sub } })),
);

const queryStrings = (keys: string[]) =>
  fc.dictionary(
    fc.oneof(fc.constantFrom(...keys), fc.string({ maxLength: 8 })),
    fc.oneof(fc.string({ maxLength: 40 }), fc.constantFrom('-1', '0', '1e309', 'NaN', '99999999999', "' or 1=1 --", '%', '[]')),
    { maxKeys: 4 },
  );

const uuidOrJunk = fc.oneof(fc.uuid(), fc.string({ maxLength: 40 }).map(encodeURIComponent));

describe('fuzzed input never gets a 5xx or a half-stored object', () => {
  const g = () => `/api/groups/${lab.groupId}`;
  const post = (who: SignedIn, url: string, body: unknown) =>
    who.agent
      .post(url)
      .set('X-CSRF-Token', who.csrf)
      .set('Content-Type', 'application/json')
      .send(JSON.stringify(body) ?? 'null');

  const jsonRoutes: { name: string; who: () => SignedIn; send: (body: unknown) => Promise<Answer>; bodies: fc.Arbitrary<unknown> }[] = [
    { name: 'POST models', who: () => designer, send: (b) => post(designer, `${g()}/models`, b), bodies: documentBodies },
    { name: 'POST models/validate', who: () => designer, send: (b) => post(designer, `${g()}/models/validate`, b), bodies: documentBodies },
    {
      name: 'PUT models/:id',
      who: () => designer,
      send: (b) =>
        designer.agent
          .put(`${g()}/models/${modelId}`)
          .set('X-CSRF-Token', designer.csrf)
          .set('Content-Type', 'application/json')
          .send(JSON.stringify(b) ?? 'null'),
      bodies: documentBodies,
    },
    {
      name: 'POST runs/estimate',
      who: () => designer,
      send: (b) => post(designer, `${g()}/runs/estimate`, b),
      bodies: fc.oneof(
        mutate({ kind: 'pole-search', modelId: '', window: smallWindow }).map((b) =>
          b && typeof b === 'object' && !Array.isArray(b) && (b as { modelId?: unknown }).modelId === '' ? { ...b, modelId } : b,
        ),
        fc
          .record({ kind: fc.constant('transmission'), modelId: fc.constant('M'), window: mutate({ emin: 1, emax: 5, points: 100 }) })
          .map((b) => ({ ...b, modelId })),
      ),
    },
    {
      name: 'POST runs',
      who: () => designer,
      send: (b) => post(designer, `${g()}/runs`, b),
      bodies: fc
        .record({
          kind: fc.constantFrom('pole-search', 'transmission', 'x'),
          window: mutate(smallWindow),
          note: fc.option(fc.string({ maxLength: 3000 }), { nil: undefined }),
        })
        .map((b) => ({ ...b, modelId })),
    },
    {
      name: 'PATCH resonances/:id (tags, notes)',
      who: () => designer,
      send: (b) =>
        designer.agent
          .patch(`${g()}/resonances/${randomUUID()}`)
          .set('X-CSRF-Token', designer.csrf)
          .set('Content-Type', 'application/json')
          .send(JSON.stringify(b) ?? 'null'),
      bodies: mutate({ tags: ['a'], notes: 'n' }),
    },
    {
      name: 'POST resonances/:id/fabrication',
      who: () => designer,
      send: (b) => post(designer, `${g()}/resonances/${randomUUID()}/fabrication`, b),
      bodies: fc.oneof(
        mutate({ action: 'propose', reason: 'r', tolerances: { energyMeV: 0.05, minQuality: 100 } }),
        mutate({ action: 'measure', energy: 4.2, width: 0.01, energyUncertainty: 0.001 }),
        mutate({ action: 'send', batch: 'w' }),
      ),
    },
    {
      name: 'POST resonances/:id/comments',
      who: () => designer,
      send: (b) => post(designer, `${g()}/resonances/${randomUUID()}/comments`, b),
      bodies: mutate({ body: 'x', mentions: [randomUUID()] }),
    },
    {
      name: 'PUT account/notifications',
      who: () => designer,
      send: (b) =>
        designer.agent
          .put('/api/account/notifications')
          .set('X-CSRF-Token', designer.csrf)
          .set('Content-Type', 'application/json')
          .send(JSON.stringify(b) ?? 'null'),
      bodies: fc.oneof(mutate({ enabled: { mentioned: false } }), fc.record({ enabled: mutate({ candidate_proposed: true, run_finished: false }) })),
    },
    {
      name: 'POST groups/:id/invitations',
      who: () => admin,
      send: (b) => post(admin, `${g()}/invitations`, b),
      bodies: mutate({ email: 'someone@fixture.example', role: 'viewer' }).filter(
        (b) => !(b && typeof b === 'object' && (b as { email?: unknown }).email === 'someone@fixture.example'),
      ),
    },
    {
      name: 'PATCH groups/:id/members/:userId',
      who: () => admin,
      send: (b) =>
        admin.agent
          .patch(`${g()}/members/${randomUUID()}`)
          .set('X-CSRF-Token', admin.csrf)
          .set('Content-Type', 'application/json')
          .send(JSON.stringify(b) ?? 'null'),
      bodies: mutate({ role: 'viewer' }),
    },
    {
      name: 'POST tokens',
      who: () => designer,
      send: (b) => post(designer, '/api/tokens', b),
      bodies: mutate({ name: 'x' }).filter((b) => !(b && typeof b === 'object' && typeof (b as { name?: unknown }).name === 'string')),
    },
    {
      name: 'PATCH account (name)',
      who: () => designer,
      send: (b) =>
        designer.agent
          .patch('/api/account')
          .set('X-CSRF-Token', designer.csrf)
          .set('Content-Type', 'application/json')
          .send(JSON.stringify(b) ?? 'null'),
      bodies: mutate({ name: 'Fuzzed Name' }),
    },
    // The current password is never the right one, so no fuzzed body changes it.
    {
      name: 'POST account/password',
      who: () => designer,
      send: (b) => post(designer, '/api/account/password', b),
      bodies: mutate({ currentPassword: 'not-the-password', newPassword: 'a-new-password-123' }),
    },
    {
      name: 'POST auth/sign-in',
      who: () => designer,
      send: (b) =>
        request(app.server)
          .post('/api/auth/sign-in')
          .set('Content-Type', 'application/json')
          .send(JSON.stringify(b) ?? 'null'),
      bodies: mutate({ email: 'nobody@fixture.example', password: 'wrong' }),
    },
    {
      name: 'POST auth/password-reset/confirm',
      who: () => designer,
      send: (b) =>
        request(app.server)
          .post('/api/auth/password-reset/confirm')
          .set('Content-Type', 'application/json')
          .send(JSON.stringify(b) ?? 'null'),
      bodies: mutate({ token: 'not-a-token', password: 'a-new-password-123' }),
    },
    {
      name: 'POST invitations/:token/accept',
      who: () => designer,
      send: (b) =>
        request(app.server)
          .post(`/api/invitations/${randomUUID()}/accept`)
          .set('Content-Type', 'application/json')
          .send(JSON.stringify(b) ?? 'null'),
      bodies: mutate({ name: 'N', password: 'a-new-password-123' }),
    },
  ];

  for (const route of jsonRoutes) {
    it(`${route.name}: any JSON body`, async () => {
      await fc.assert(
        fc.asyncProperty(route.bodies, (body) => checkAnswer(`${route.name} ${JSON.stringify(body)?.slice(0, 200)}`, () => route.send(body))),
        { numRuns: RUNS },
      );
    });
  }

  it('bodies that are not JSON at all', async () => {
    await fc.assert(
      fc.asyncProperty(fc.string({ maxLength: 200 }), fc.constantFrom('/models', '/models/validate', '/runs', '/runs/estimate'), (text, path) =>
        checkAnswer(`POST ${path} raw ${text.slice(0, 50)}`, () =>
          designer.agent.post(`${g()}${path}`).set('X-CSRF-Token', designer.csrf).set('Content-Type', 'application/json').send(text),
        ),
      ),
      { numRuns: RUNS },
    );
  });

  it('queries of the lists, the catalogue, its exports and the activity', async () => {
    const targets: [string, string[]][] = [
      ['/models', ['search', 'family', 'page', 'pageSize']],
      ['/runs', ['status', 'kind', 'modelId', 'page', 'pageSize']],
      [
        '/catalogue',
        ['q', 'page', 'pageSize', 'sort', 'dir', 'qmin', 'qmax', 'emin', 'emax', 'gmin', 'taumax', 'dim.width.min', 'family', 'material', 'tags', 'bound'],
      ],
      ['/catalogue/export.csv', ['q', 'family', 'tags', 'emin', 'emax', 'sort']],
      ['/catalogue/export.json', ['q', 'family', 'tags', 'emin', 'emax', 'bound']],
      ['/activity', ['limit']],
      ['/fabrication', ['state']],
    ];
    const requests = fc.constantFrom(...targets).chain(([path, keys]) => fc.tuple(fc.constant(path), queryStrings(keys)));
    await fc.assert(
      fc.asyncProperty(requests, ([path, query]) =>
        checkAnswer(`GET ${path}?${new URLSearchParams(query)}`, () => designer.agent.get(`${g()}${path}`).query(query)),
      ),
      { numRuns: RUNS * 2 },
    );
  });

  it('path parameters of models, versions, runs and resonances', async () => {
    await fc.assert(
      fc.asyncProperty(uuidOrJunk, fc.constantFrom('/models/', '/runs/', '/resonances/', '/models/M/versions/'), async (id, path) => {
        const url = path === '/models/M/versions/' ? `${g()}/models/${modelId}/versions/${id}` : `${g()}${path}${id}`;
        return checkAnswer(`GET ${url}`, () => designer.agent.get(url));
      }),
      { numRuns: RUNS * 2 },
    );
  });

  it('uploads of drawings: any bytes, any field names, any numbers', async () => {
    const fields = fc.dictionary(
      fc.oneof(fc.constantFrom('spacingNm', 'widthNm'), fc.string({ minLength: 1, maxLength: 8 })),
      fc.oneof(fc.constantFrom('5', '400', '0', '-1', '1e9', 'x', ''), fc.string({ maxLength: 20 })),
      { maxKeys: 4 },
    );
    await fc.assert(
      fc.asyncProperty(
        fc.uint8Array({ maxLength: 2000 }),
        fc.constantFrom('file', 'drawing', 'file[]'),
        fields,
        fc.boolean(),
        async (bytes, field, extra, withSignature) => {
          // Half the time the bytes start like a PNG, so the header parser sees odd headers.
          const head = withSignature ? Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a, 0, 0, 0, 13, 0x49, 0x48, 0x44, 0x52]) : Buffer.alloc(0);
          const file = Buffer.concat([head, Buffer.from(bytes)]);
          return checkAnswer(`upload ${field} ${file.length} bytes ${JSON.stringify(extra)}`, () => {
            let req = designer.agent.post(`${g()}/models/mask-from-bitmap`).set('X-CSRF-Token', designer.csrf);
            for (const [k, v] of Object.entries(extra)) req = req.field(k, v);
            return req.attach(field, file, 'drawing.png');
          });
        },
      ),
      { numRuns: RUNS * 2 },
    );
  });

  it('health answered throughout, and the event loop was never held for long', () => {
    loopDelay.disable();
    expect(healthTimes.length).toBeGreaterThan(5);
    // The 100 ms target holds with room on an idle machine (p50 here is a few ms). The bound
    // asserted is 1 s: this file shares 2 cores with PostgreSQL, vitest and a compute thread,
    // where scheduling alone can delay a timer by a few hundred ms; a request that computed
    // on the event loop (the 111 s polygon, the 7 s estimate) would exceed it by far.
    expect(Math.max(...healthTimes)).toBeLessThan(1000);
    expect(loopDelay.max / 1e6).toBeLessThan(1000);
  });
});
