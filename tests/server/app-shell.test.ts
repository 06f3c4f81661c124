import { createHash } from 'node:crypto';
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { startTestApp, type TestApp } from './test-app.js';

let app: TestApp;
let clientDir: string;

beforeAll(async () => {
  // A stand-in for the built Angular client: index.html plus one asset.
  clientDir = mkdtempSync(join(tmpdir(), 'poleward-client-'));
  writeFileSync(join(clientDir, 'index.html'), '<!doctype html><title>Poleward</title><app-root></app-root>');
  writeFileSync(join(clientDir, 'main-ABC.js'), 'console.log(1)');
  app = await startTestApp({ config: { clientDir } });
});
afterAll(() => app.close());

describe('HTTP shell', () => {
  it('answers /api/health with ok and the package version', async () => {
    const res = await request(app.server).get('/api/health');
    expect(res.status).toBe(200);
    expect(res.body).toEqual({ ok: true, version: app.config.version });
    expect(app.config.version).toMatch(/^\d+\.\d+\.\d+/);
  });

  it('serves the client, and index.html for deep links (SPA fallback), with helmet headers', async () => {
    const deep = await request(app.server).get('/catalogue/some-resonance');
    expect(deep.status).toBe(200);
    expect(deep.text).toContain('<app-root>');
    expect(deep.headers['x-content-type-options']).toBe('nosniff');
    const csp = deep.headers['content-security-policy'] as string;
    expect(csp).toContain("script-src 'self'");
    // The critical-CSS loader's onload handler is allowed by its exact hash, nothing else inline.
    const hash = createHash('sha256').update("this.media='all'").digest('base64');
    expect(csp).toContain(`script-src-attr 'unsafe-hashes' 'sha256-${hash}'`);
    expect(csp).not.toContain('upgrade-insecure-requests');
    const asset = await request(app.server).get('/main-ABC.js');
    expect(asset.status).toBe(200);
    expect(asset.text).toBe('console.log(1)');
  });

  it('answers unknown API routes with a JSON 404, not index.html', async () => {
    const res = await request(app.server).get('/api/no-such-thing');
    expect(res.status).toBe(404);
    expect(res.body).toEqual({ status: 404, code: 'not_found', message: 'There is no API route GET /api/no-such-thing.' });
  });

  it('answers malformed JSON with 400 invalid_json and an oversized body with 413', async () => {
    const bad = await request(app.server).post('/api/auth/sign-in').set('Content-Type', 'application/json').send('{"email": ');
    expect(bad.status).toBe(400);
    expect(bad.body.code).toBe('invalid_json');
    const big = await request(app.server)
      .post('/api/auth/sign-in')
      .set('Content-Type', 'application/json')
      .send(JSON.stringify({ email: 'a@b.example', password: 'x'.repeat(1_100_000) }));
    expect(big.status).toBe(413);
    expect(big.body.code).toBe('payload_too_large');
  });

  it('names every bad field of a body', async () => {
    const res = await request(app.server).post('/api/auth/sign-in').send({ email: 'no-at-sign', password: 42 });
    expect(res.status).toBe(400);
    expect(res.body).toMatchObject({ status: 400, code: 'validation_failed' });
    expect(res.body.issues).toEqual([
      { path: 'email', message: 'must be an e-mail address' },
      { path: 'password', message: expect.stringMatching(/string/) },
    ]);
  });
});

describe('feature mounting', () => {
  it('mounts feature routers under /api, behind authentication and group scoping', async () => {
    const { Router } = await import('express');
    const { requireRole } = await import('../../server/auth/require-role.js');
    const { createLab } = await import('./lab-fixture.js');
    const { signInAs } = await import('./sign-in-as.js');
    const withFeature = await startTestApp({
      mountFeatures: (api) => {
        const feature = Router({ mergeParams: true });
        feature.get('/', requireRole('designer'), (req, res) => {
          res.json({ group: req.membership!.groupId });
        });
        api.use('/groups/:groupId/widgets', feature);
      },
    });
    try {
      const lab = await createLab(withFeature.handle.db, ['designer', 'viewer']);
      const designer = await signInAs(withFeature, lab.as('designer').email);
      expect((await designer.get(`/api/groups/${lab.groupId}/widgets`)).body).toEqual({ group: lab.groupId });
      const viewer = await signInAs(withFeature, lab.as('viewer').email);
      expect((await viewer.get(`/api/groups/${lab.groupId}/widgets`)).status).toBe(403);
      expect((await request(withFeature.server).get(`/api/groups/${lab.groupId}/widgets`)).status).toBe(401);
    } finally {
      await withFeature.close();
    }
  });
});
