// The route adapter (server/http/mount-route.ts) on test-only routes: the handler gets the
// declared input parsed, and a JSON answer that does not fit its declared schema (a field
// the schema does not declare, a required one missing, a wrong type) is refused with 500.
import express, { Router } from 'express';
import request from 'supertest';
import { describe, expect, it } from 'vitest';
import { z } from 'zod';
import { declareRoute, empty, json } from '../../shared/api/route.js';
import { errorHandler } from '../../server/http/error-handler.js';
import { AnswerSample, answerCheckMode, type AnswerCheckMode } from '../../server/http/answer-check.js';
import { jsonText, mountRoute, withStatus, type RouteHandler } from '../../server/http/mount-route.js';

const itemSchema = z.object({ id: z.string(), size: z.number(), at: z.iso.datetime({ offset: true }), tags: z.array(z.object({ name: z.string() })) });

const itemRoute = declareRoute({
  id: 'testItem',
  method: 'post',
  path: '/things/{thingId}/items',
  access: 'public',
  tag: 'test',
  summary: 'test only',
  params: z.object({ thingId: z.string().min(3) }),
  query: z.object({ limit: z.coerce.number().int().default(5) }),
  body: z.object({ size: z.number().positive() }),
  answer: json(201, 'the item', itemSchema, [202]),
});

const goneRoute = declareRoute({
  id: 'testGone',
  method: 'delete',
  path: '/things/{thingId}',
  access: 'public',
  tag: 'test',
  summary: 'test only',
  answer: empty(204, 'gone'),
});

function appWith(handler: RouteHandler<typeof itemRoute>, answerCheck: AnswerCheckMode = 'every'): { app: express.Express; logged: unknown[] } {
  const logged: unknown[] = [];
  const log = (msg: string, err: unknown) => void logged.push([msg, err]);
  const router = Router();
  mountRoute(router, itemRoute, handler, { log, answerCheck });
  mountRoute(router, goneRoute, () => undefined, { log });
  const app = express();
  app.use(express.json());
  app.use('/api', router);
  app.use(errorHandler(log));
  return { app, logged };
}

const good = { id: 'a', size: 2, at: new Date('2026-12-02T06:00:00Z'), tags: [{ name: 'x' }] };

describe('mountRoute', () => {
  it('hands the handler the parsed params, query (with defaults) and body, and sends a fitting answer with the declared status', async () => {
    let seen: unknown;
    const { app } = appWith((input) => {
      seen = input;
      return good;
    });
    const res = await request(app).post('/api/things/abc/items?limit=7').send({ size: 3 });
    expect(res.status).toBe(201);
    expect(seen).toEqual({ params: { thingId: 'abc' }, query: { limit: 7 }, body: { size: 3 } });
    // A Date leaves as the ISO string the schema declares.
    expect(res.body).toEqual({ id: 'a', size: 2, at: '2026-12-02T06:00:00.000Z', tags: [{ name: 'x' }] });
    const defaults = await request(app).post('/api/things/abc/items').send({ size: 3 });
    expect((seen as { query: unknown }).query).toEqual({ limit: 5 });
    expect(defaults.status).toBe(201);
  });

  it('refuses bad input with 400 naming every field, before the handler runs', async () => {
    let called = false;
    const { app } = appWith(() => {
      called = true;
      return good;
    });
    const res = await request(app).post('/api/things/ab/items?limit=x').send({ size: -1 });
    expect(res.status).toBe(400);
    expect(res.body.code).toBe('validation_failed');
    expect(res.body.issues.map((i: { path: string }) => i.path).sort()).toEqual(['params.thingId', 'query.limit', 'size']);
    expect(called).toBe(false);
  });

  it('answers 500 answer_mismatch, and logs the path, when the handler sends a field the schema does not declare', async () => {
    const { app, logged } = appWith(() => ({ ...good, tags: [{ name: 'x', secret: 'leaked' }] }) as never);
    const res = await request(app).post('/api/things/abc/items').send({ size: 1 });
    expect(res.status).toBe(500);
    expect(res.body.code).toBe('answer_mismatch');
    expect(res.body.message).toContain('tags.0.secret');
    expect(JSON.stringify(res.body)).not.toContain('leaked');
    expect(JSON.stringify(logged)).toContain('tags.0.secret: not declared in the answer schema');
  });

  it('answers 500 answer_mismatch when the handler omits a required field or sends a wrong type', async () => {
    const { id: _omitted, ...withoutId } = good;
    const missing = await request(appWith(() => withoutId as never).app)
      .post('/api/things/abc/items')
      .send({ size: 1 });
    expect(missing.status).toBe(500);
    expect(missing.body.code).toBe('answer_mismatch');
    expect(missing.body.message).toContain('id');
    // undefined vanishes in JSON: the client would miss the field, so it counts as missing.
    const undef = await request(appWith(() => ({ ...good, size: undefined }) as never).app)
      .post('/api/things/abc/items')
      .send({ size: 1 });
    expect(undef.status).toBe(500);
    const wrong = await request(appWith(() => ({ ...good, at: 'yesterday' })).app)
      .post('/api/things/abc/items')
      .send({ size: 1 });
    expect(wrong.status).toBe(500);
    expect(wrong.body.message).toContain('at');
  });

  it('allows the other declared statuses only', async () => {
    const queued = await request(appWith(() => withStatus(202, good)).app)
      .post('/api/things/abc/items')
      .send({ size: 1 });
    expect(queued.status).toBe(202);
    const undeclared = await request(appWith(() => withStatus(200, good)).app)
      .post('/api/things/abc/items')
      .send({ size: 1 });
    expect(undeclared.status).toBe(500);
  });

  it('ends an empty answer with its declared status', async () => {
    const res = await request(appWith(() => good).app).delete('/api/things/abc');
    expect(res.status).toBe(204);
    expect(res.text).toBe('');
  });

  it('sends JSON text as it is, after the same check', async () => {
    const text = JSON.stringify({ ...good, at: good.at.toISOString() });
    const sent = await request(appWith(() => jsonText(text)).app)
      .post('/api/things/abc/items')
      .send({ size: 1 });
    expect(sent.status).toBe(201);
    expect(sent.text).toBe(text);
    const bad = await request(appWith(() => jsonText(JSON.stringify({ ...good, extra: 1 }))).app)
      .post('/api/things/abc/items')
      .send({ size: 1 });
    expect(bad.status).toBe(500);
    expect(bad.body.code).toBe('answer_mismatch');
  });

  it('in sample mode checks the first 20 answers of a route, then one in 50', async () => {
    const { app } = appWith(() => ({ ...good, extra: 1 }) as never, 'sample');
    const statuses: number[] = [];
    for (let i = 0; i < 60; i++) statuses.push((await request(app).post('/api/things/abc/items').send({ size: 1 })).status);
    const refused = statuses.flatMap((s, i) => (s === 500 ? [i + 1] : []));
    expect(refused).toEqual([...Array.from({ length: 20 }, (_, i) => i + 1), 50]);
  });
});

describe('answerCheckMode', () => {
  it('checks every answer outside production and a sample in production, unless POLEWARD_ANSWER_CHECK says otherwise', () => {
    expect(answerCheckMode({ NODE_ENV: 'test' })).toBe('every');
    expect(answerCheckMode({})).toBe('every');
    expect(answerCheckMode({ NODE_ENV: 'production' })).toBe('sample');
    expect(answerCheckMode({ NODE_ENV: 'production', POLEWARD_ANSWER_CHECK: 'every' })).toBe('every');
    expect(answerCheckMode({ NODE_ENV: 'test', POLEWARD_ANSWER_CHECK: 'sample' })).toBe('sample');
    const every = new AnswerSample('every');
    expect(Array.from({ length: 100 }, () => every.due()).every(Boolean)).toBe(true);
  });
});
