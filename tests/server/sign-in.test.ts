import jwt from 'jsonwebtoken';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createLab, fixturePassword, type Lab } from './lab-fixture.js';
import { signInAs } from './sign-in-as.js';
import { startTestApp, testJwtSecret, type TestApp } from './test-app.js';

let app: TestApp;
let lab: Lab;

beforeAll(async () => {
  app = await startTestApp();
  lab = await createLab(app.handle.db, ['admin', 'viewer']);
});
afterAll(() => app.close());

function cookieHeader(res: request.Response): string[] {
  const raw = res.headers['set-cookie'] as unknown as string[] | string | undefined;
  return raw === undefined ? [] : Array.isArray(raw) ? raw : [raw];
}

describe('sign-in', () => {
  it('answers 401 invalid_credentials with the clear message on a wrong password', async () => {
    const res = await request(app.server).post('/api/auth/sign-in').send({ email: lab.as('viewer').email, password: 'not-the-password' });
    expect(res.status).toBe(401);
    expect(res.body).toEqual({ status: 401, code: 'invalid_credentials', message: 'E-mail or password is wrong.' });
    expect(cookieHeader(res)).toEqual([]);
  });

  it('gives an unknown e-mail exactly the same answer as a wrong password', async () => {
    const res = await request(app.server).post('/api/auth/sign-in').send({ email: 'nobody@fixture.example', password: fixturePassword });
    expect(res.status).toBe(401);
    expect(res.body.message).toBe('E-mail or password is wrong.');
  });

  it('sets an httpOnly session cookie and a readable CSRF cookie, both SameSite=Lax on /', async () => {
    const viewer = lab.as('viewer');
    // Case and spaces in the e-mail do not matter: addresses are stored lower-case.
    const res = await request(app.server).post('/api/auth/sign-in').send({ email: `  ${viewer.email.toUpperCase()}`, password: fixturePassword });
    expect(res.status).toBe(200);
    expect(res.body.user).toEqual({ id: viewer.id, email: viewer.email, name: viewer.name });
    expect(res.body.groups).toEqual([{ id: lab.groupId, name: lab.name, slug: expect.any(String), role: 'viewer' }]);
    const cookies = cookieHeader(res);
    const session = cookies.find((c) => c.startsWith('pw_session='))!;
    const csrf = cookies.find((c) => c.startsWith('pw_csrf='))!;
    expect(session).toMatch(/HttpOnly/i);
    expect(session).toMatch(/SameSite=Lax/i);
    expect(session).toMatch(/Path=\//);
    expect(session).toMatch(/Max-Age=43200/);
    expect(csrf).not.toMatch(/HttpOnly/i);
    expect(csrf).toContain(`pw_csrf=${res.body.csrfToken};`);
  });

  it('keeps the session across requests and ends it on sign-out', async () => {
    const me = await signInAs(app, lab.as('admin').email);
    const before = await me.get('/api/auth/session');
    expect(before.status).toBe(200);
    expect(before.body.user.email).toBe(lab.as('admin').email);
    expect(before.body.csrfToken).toBe(me.csrf);
    expect((await me.post('/api/auth/sign-out')).status).toBe(204);
    const after = await me.get('/api/auth/session');
    expect(after.status).toBe(401);
    expect(after.body.code).toBe('unauthenticated');
  });

  it('answers 401 to GET /api/auth/session without a cookie', async () => {
    const res = await request(app.server).get('/api/auth/session');
    expect(res.status).toBe(401);
    expect(res.body).toMatchObject({ code: 'unauthenticated', message: 'Sign in first.' });
  });
});

describe('session tokens', () => {
  async function sessionCookie(): Promise<string> {
    const res = await request(app.server).post('/api/auth/sign-in').send({ email: lab.as('viewer').email, password: fixturePassword });
    return cookieHeader(res).find((c) => c.startsWith('pw_session='))!.split(';')[0]!.slice('pw_session='.length);
  }

  it('refuses a tampered JWT with 401', async () => {
    const token = await sessionCookie();
    const [head, payload, sig] = token.split('.');
    const claims = JSON.parse(Buffer.from(payload!, 'base64url').toString());
    claims.sub = lab.as('admin').id; // try to become the admin without the secret
    const forged = `${head}.${Buffer.from(JSON.stringify(claims)).toString('base64url')}.${sig}`;
    const res = await request(app.server).get('/api/auth/session').set('Cookie', `pw_session=${forged}`);
    expect(res.status).toBe(401);
    expect(res.body.code).toBe('unauthenticated');
    expect(res.body.message).toMatch(/invalid or has expired/);
  });

  it('refuses an expired JWT with 401', async () => {
    const viewer = lab.as('viewer');
    const [row] = await app.handle.pool.query('select password_changed_at from users where id = $1', [viewer.id]).then((r) => r.rows);
    const now = Math.floor(Date.now() / 1000);
    const expired = jwt.sign({ sub: viewer.id, pwc: (row.password_changed_at as Date).getTime(), iat: now - 13 * 3600, exp: now - 3600 }, testJwtSecret, { algorithm: 'HS256' });
    // The same claims with a future expiry are accepted, so the 401 is due to the expiry alone.
    const fresh = jwt.sign({ sub: viewer.id, pwc: (row.password_changed_at as Date).getTime(), iat: now, exp: now + 3600 }, testJwtSecret, { algorithm: 'HS256' });
    expect((await request(app.server).get('/api/auth/session').set('Cookie', `pw_session=${fresh}`)).status).toBe(200);
    const res = await request(app.server).get('/api/auth/session').set('Cookie', `pw_session=${expired}`);
    expect(res.status).toBe(401);
    expect(res.body.code).toBe('unauthenticated');
  });

  it('refuses a JWT signed with another secret or with alg none', async () => {
    const viewer = lab.as('viewer');
    const other = jwt.sign({ pwc: 0 }, 'some-other-secret-of-sufficient-length!!', { subject: viewer.id, expiresIn: 600 });
    const none = jwt.sign({ pwc: 0 }, '', { subject: viewer.id, algorithm: 'none' } as jwt.SignOptions);
    for (const token of [other, none]) {
      const res = await request(app.server).get('/api/auth/session').set('Cookie', `pw_session=${token}`);
      expect(res.status).toBe(401);
    }
  });

  it('still serves public routes with a stale cookie', async () => {
    const res = await request(app.server).get('/api/health').set('Cookie', 'pw_session=garbage');
    expect(res.status).toBe(200);
    expect(res.body).toEqual({ ok: true, version: expect.any(String) });
  });
});

describe('sign-in rate limit', () => {
  it('answers 429 rate_limited after the configured number of attempts, per e-mail', async () => {
    const limited = await startTestApp({ signInLimit: { max: 3, windowMs: 60_000 } });
    try {
      const email = lab.as('viewer').email;
      for (let i = 0; i < 3; i++) {
        const res = await request(limited.server).post('/api/auth/sign-in').send({ email, password: `wrong-${i}` });
        expect(res.status).toBe(401);
      }
      const blocked = await request(limited.server).post('/api/auth/sign-in').send({ email, password: fixturePassword });
      expect(blocked.status).toBe(429);
      expect(blocked.body.code).toBe('rate_limited');
      expect(blocked.body.message).toMatch(/Too many sign-in attempts/);
      // Another e-mail from the same address has its own budget.
      const other = await request(limited.server).post('/api/auth/sign-in').send({ email: lab.as('admin').email, password: fixturePassword });
      expect(other.status).toBe(200);
    } finally {
      await limited.close();
    }
  });
});
