import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createLab, fixturePassword, type Lab } from './lab-fixture.js';
import { signInAs } from './sign-in-as.js';
import { startTestApp, type TestApp } from './test-app.js';

let app: TestApp;
let lab: Lab;

beforeAll(async () => {
  app = await startTestApp();
  lab = await createLab(app.handle.db, ['designer', 'viewer', 'reviewer']);
});
afterAll(() => app.close());

describe('/api/account', () => {
  it('answers 401 to a caller who is not signed in, on every account route', async () => {
    const anon = request(app.server);
    expect((await anon.get('/api/account')).status).toBe(401);
    expect((await anon.patch('/api/account').send({ name: 'x' })).status).toBe(401);
    expect((await anon.post('/api/account/password').send({ currentPassword: 'a', newPassword: 'bbbbbbbb' })).status).toBe(401);
    expect((await anon.post('/api/account/sign-out-everywhere')).status).toBe(401);
  });

  it('shows the e-mail and renames the account, naming the field of a bad name', async () => {
    const me = await signInAs(app, lab.as('designer').email);
    const profile = await me.get('/api/account');
    expect(profile.status).toBe(200);
    expect(profile.body.email).toBe(lab.as('designer').email);

    const empty = await me.patch('/api/account', { name: '   ' });
    expect(empty.status).toBe(400);
    expect(empty.body.issues.map((i: { path: string }) => i.path)).toContain('name');

    const renamed = await me.patch('/api/account', { name: 'Ada Designer' });
    expect(renamed.status).toBe(200);
    expect(renamed.body.name).toBe('Ada Designer');
    expect((await me.get('/api/auth/session')).body.user.name).toBe('Ada Designer');
    // CSRF applies: the same PATCH without the header is refused and changes nothing.
    const noCsrf = await me.agent.patch('/api/account').send({ name: 'Mallory' });
    expect(noCsrf.status).toBe(403);
    expect((await me.get('/api/account')).body.name).toBe('Ada Designer');
  });

  it('changes the password only with the current one, keeps this browser signed in and ends the other sessions', async () => {
    const email = lab.as('viewer').email;
    const me = await signInAs(app, email);
    const other = await signInAs(app, email);

    const wrong = await me.post('/api/account/password', { currentPassword: 'not-it', newPassword: 'brand-new-pass-1' });
    expect(wrong.status).toBe(400);
    expect(wrong.body.code).toBe('wrong_password');
    expect(wrong.body.issues[0].path).toBe('currentPassword');

    const short = await me.post('/api/account/password', { currentPassword: fixturePassword, newPassword: 'short' });
    expect(short.status).toBe(400);
    expect(short.body.issues[0].path).toBe('newPassword');

    const missing = await me.post('/api/account/password', { newPassword: 'brand-new-pass-1' });
    expect(missing.status).toBe(400);
    expect(missing.body.issues[0].path).toBe('currentPassword');

    const ok = await me.post('/api/account/password', { currentPassword: fixturePassword, newPassword: 'brand-new-pass-1' });
    expect(ok.status).toBe(204);
    // The agent received a fresh session cookie; the other browser's session has ended.
    expect((await me.agent.get('/api/account')).status).toBe(200);
    expect((await other.get('/api/account')).status).toBe(401);
    // The old password no longer signs in, the new one does.
    expect((await request(app.server).post('/api/auth/sign-in').send({ email, password: fixturePassword })).status).toBe(401);
    await signInAs(app, email, 'brand-new-pass-1');
  });

  it('signs out everywhere, this browser included, and says how many sessions ended', async () => {
    const email = lab.as('reviewer').email;
    const a = await signInAs(app, email);
    const b = await signInAs(app, email);
    const res = await a.post('/api/account/sign-out-everywhere');
    expect(res.status).toBe(200);
    expect(res.body.sessionsEnded).toBeGreaterThanOrEqual(2);
    expect((await a.get('/api/account')).status).toBe(401);
    expect((await b.get('/api/account')).status).toBe(401);
    const audit = await app.handle.pool.query("select count(*)::int as n from audit_log where action = 'account.signed_out_everywhere' and account_id = $1", [
      lab.as('reviewer').id,
    ]);
    expect(audit.rows[0].n).toBe(1);
  });
});
