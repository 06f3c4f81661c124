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
    const res = await request(app.server)
      .post('/api/auth/sign-in')
      .send({ email: lab.as('viewer').email, password: 'not-the-password' });
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
    const res = await request(app.server)
      .post('/api/auth/sign-in')
      .send({ email: `  ${viewer.email.toUpperCase()}`, password: fixturePassword });
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
    const res = await request(app.server)
      .post('/api/auth/sign-in')
      .send({ email: lab.as('viewer').email, password: fixturePassword });
    return cookieHeader(res)
      .find((c) => c.startsWith('pw_session='))!
      .split(';')[0]!
      .slice('pw_session='.length);
  }
  const claimsOf = (token: string) => JSON.parse(Buffer.from(token.split('.')[1]!, 'base64url').toString()) as { sub: string; jti: string };
  const asCookie = (token: string) => request(app.server).get('/api/auth/session').set('Cookie', `pw_session=${token}`);

  it('refuses a tampered JWT with 401', async () => {
    const token = await sessionCookie();
    const [head, payload, sig] = token.split('.');
    const claims = JSON.parse(Buffer.from(payload!, 'base64url').toString());
    claims.sub = lab.as('admin').id; // try to become the admin without the secret
    const forged = `${head}.${Buffer.from(JSON.stringify(claims)).toString('base64url')}.${sig}`;
    const res = await asCookie(forged);
    expect(res.status).toBe(401);
    expect(res.body.code).toBe('unauthenticated');
    expect(res.body.message).toMatch(/invalid, has ended or has expired/);
  });

  it('refuses an expired JWT with 401', async () => {
    const { sub, jti } = claimsOf(await sessionCookie());
    const now = Math.floor(Date.now() / 1000);
    const expired = jwt.sign({ sub, jti, iat: now - 13 * 3600, exp: now - 3600 }, testJwtSecret, { algorithm: 'HS256' });
    // The same claims with a future expiry are accepted, so the 401 is due to the expiry alone.
    const fresh = jwt.sign({ sub, jti, iat: now, exp: now + 3600 }, testJwtSecret, { algorithm: 'HS256' });
    expect((await asCookie(fresh)).status).toBe(200);
    const res = await asCookie(expired);
    expect(res.status).toBe(401);
    expect(res.body.code).toBe('unauthenticated');
  });

  it('refuses a correctly signed JWT that has no expiry', async () => {
    const { sub, jti } = claimsOf(await sessionCookie());
    const forever = jwt.sign({ sub, jti }, testJwtSecret, { algorithm: 'HS256' });
    expect(claimsOf(forever)).not.toHaveProperty('exp');
    const res = await asCookie(forever);
    expect(res.status).toBe(401);
    expect(res.body.code).toBe('unauthenticated');
  });

  it("refuses a JWT naming another user's session", async () => {
    const { jti } = claimsOf(await sessionCookie());
    const now = Math.floor(Date.now() / 1000);
    const borrowed = jwt.sign({ sub: lab.as('admin').id, jti, iat: now, exp: now + 3600 }, testJwtSecret, { algorithm: 'HS256' });
    expect((await asCookie(borrowed)).status).toBe(401);
  });

  it('refuses a JWT signed with another secret or with alg none', async () => {
    const { sub, jti } = claimsOf(await sessionCookie());
    const other = jwt.sign({ jti }, 'some-other-secret-of-sufficient-length!!', { subject: sub, expiresIn: 600 });
    const none = jwt.sign({ jti }, '', { subject: sub, algorithm: 'none' } as jwt.SignOptions);
    for (const token of [other, none]) {
      const res = await asCookie(token);
      expect(res.status).toBe(401);
    }
  });

  it('still serves public routes with a stale cookie', async () => {
    const res = await request(app.server).get('/api/health').set('Cookie', 'pw_session=garbage');
    expect(res.status).toBe(200);
    expect(res.body).toEqual({ ok: true, version: expect.any(String) });
  });
});

describe('sign-out', () => {
  it('ends the session on the server: a copy of the old cookie answers 401 afterwards', async () => {
    const res = await request(app.server)
      .post('/api/auth/sign-in')
      .send({ email: lab.as('viewer').email, password: fixturePassword });
    const cookies = cookieHeader(res).map((c) => c.split(';')[0]!);
    const copied = cookies.join('; ');
    expect((await request(app.server).get('/api/auth/session').set('Cookie', copied)).status).toBe(200);
    const out = await request(app.server).post('/api/auth/sign-out').set('Cookie', copied).set('X-CSRF-Token', res.body.csrfToken);
    expect(out.status).toBe(204);
    const replay = await request(app.server).get('/api/auth/session').set('Cookie', copied);
    expect(replay.status).toBe(401);
    expect(replay.body.message).toMatch(/has ended/);
    const row = await app.handle.pool.query('select revoked_at from sessions where user_id = $1 and revoked_at is not null', [lab.as('viewer').id]);
    expect(row.rowCount).toBeGreaterThanOrEqual(1);
  });

  it("a sign-in clears the person's sessions that ended more than a day ago, and keeps the rest", async () => {
    const own = await createLab(app.handle.db, ['viewer']);
    const id = own.as('viewer').id;
    await app.handle.pool.query(
      `insert into sessions (user_id, expires_at, revoked_at) values
         ($1, now() - interval '2 days', null), ($1, now() + interval '1 hour', now() - interval '3 days'), ($1, now() + interval '1 hour', now() - interval '1 hour')`,
      [id],
    );
    await signInAs(app, own.as('viewer').email);
    const { rows } = await app.handle.pool.query('select revoked_at is null as open from sessions where user_id = $1 order by created_at', [id]);
    expect(rows).toEqual([{ open: false }, { open: true }]);
  });

  it('other sessions of the same person stay signed in', async () => {
    const one = await signInAs(app, lab.as('admin').email);
    const two = await signInAs(app, lab.as('admin').email);
    expect((await one.post('/api/auth/sign-out')).status).toBe(204);
    expect((await two.get('/api/auth/session')).status).toBe(200);
  });
});

describe('CSRF value bound to the session', () => {
  it("refuses another session's CSRF value, even when the pw_csrf cookie repeats it", async () => {
    const a = await signInAs(app, lab.as('admin').email);
    const b = await request(app.server)
      .post('/api/auth/sign-in')
      .send({ email: lab.as('admin').email, password: fixturePassword });
    const bSession = cookieHeader(b)
      .find((c) => c.startsWith('pw_session='))!
      .split(';')[0]!;
    expect(b.body.csrfToken).not.toBe(a.csrf);
    // Session B's cookie, with session A's CSRF value planted as both the cookie and the header.
    const res = await request(app.server)
      .post('/api/tokens')
      .set('Cookie', `${bSession}; pw_csrf=${a.csrf}`)
      .set('X-CSRF-Token', a.csrf)
      .send({ name: 'planted' });
    expect(res.status).toBe(403);
    expect(res.body.code).toBe('csrf_failed');
    const ok = await request(app.server).post('/api/tokens').set('Cookie', bSession).set('X-CSRF-Token', b.body.csrfToken).send({ name: 'own value' });
    expect(ok.status).toBe(201);
  });

  it('GET /session sets the pw_csrf cookie again when it was lost, with the same value', async () => {
    const signIn = await request(app.server)
      .post('/api/auth/sign-in')
      .send({ email: lab.as('viewer').email, password: fixturePassword });
    const sessionOnly = cookieHeader(signIn)
      .find((c) => c.startsWith('pw_session='))!
      .split(';')[0]!;
    const res = await request(app.server).get('/api/auth/session').set('Cookie', sessionOnly);
    expect(res.status).toBe(200);
    expect(res.body.csrfToken).toBe(signIn.body.csrfToken);
    expect(cookieHeader(res).find((c) => c.startsWith('pw_csrf='))).toContain(`pw_csrf=${signIn.body.csrfToken};`);
  });
});

describe('sign-in rate limit', () => {
  const minute = 60_000;

  it('counts failed sign-ins only: good ones never lock an account', async () => {
    const limited = await startTestApp({ signInLimits: { perAccount: { max: 3, windowMs: minute }, perIp: { max: 100, windowMs: minute } } });
    try {
      const email = lab.as('viewer').email;
      for (let i = 0; i < 6; i++) {
        const res = await request(limited.server).post('/api/auth/sign-in').send({ email, password: fixturePassword });
        expect(res.status, `good sign-in ${i + 1}`).toBe(200);
      }
      for (let i = 0; i < 3; i++) {
        expect(
          (
            await request(limited.server)
              .post('/api/auth/sign-in')
              .send({ email, password: `wrong-${i}` })
          ).status,
        ).toBe(401);
      }
      const blocked = await request(limited.server).post('/api/auth/sign-in').send({ email, password: fixturePassword });
      expect(blocked.status).toBe(429);
      expect(blocked.body.code).toBe('rate_limited');
      expect(blocked.body.message).toMatch(/Too many failed sign-in attempts for this account; try again in \d+ minutes?/);
      expect(blocked.headers['retry-after']).toMatch(/^\d+$/);
      // Another account from the same address has its own budget.
      const other = await request(limited.server)
        .post('/api/auth/sign-in')
        .send({ email: lab.as('admin').email, password: fixturePassword });
      expect(other.status).toBe(200);
    } finally {
      await limited.close();
    }
  });

  it('limits one address spraying a password over many accounts', async () => {
    const limited = await startTestApp({ signInLimits: { perAccount: { max: 100, windowMs: minute }, perIp: { max: 4, windowMs: minute } } });
    try {
      const statuses: number[] = [];
      for (let i = 0; i < 6; i++) {
        const res = await request(limited.server)
          .post('/api/auth/sign-in')
          .send({ email: `sprayed${i}@fixture.example`, password: 'Summer2026!' });
        statuses.push(res.status);
        if (res.status === 429) expect(res.body.message).toMatch(/from your address/);
      }
      expect(statuses).toEqual([401, 401, 401, 401, 429, 429]);
    } finally {
      await limited.close();
    }
  });

  it('records failed sign-ins and refusals on the account concerned, shown to its owner', async () => {
    const own = await createLab(app.handle.db, ['viewer']);
    const email = own.as('viewer').email;
    const limited = await startTestApp({ signInLimits: { perAccount: { max: 2, windowMs: minute }, perIp: { max: 100, windowMs: minute } } });
    try {
      for (let i = 0; i < 3; i++) await request(limited.server).post('/api/auth/sign-in').send({ email, password: 'wrong-password' });
    } finally {
      await limited.close();
    }
    const me = await signInAs(app, email);
    const actions = ((await me.get('/api/account/activity')).body as { action: string }[]).map((e) => e.action);
    expect(actions.filter((a) => a === 'auth.sign_in_failed')).toHaveLength(2);
    expect(actions).toContain('security.rate_limited');
    expect(actions).toContain('auth.signed_in');
  });
});
