import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createLab, fixturePassword } from './lab-fixture.js';
import { tokenFromLink, waitForMailTo } from './outbox-wait.js';
import { signInAs } from './sign-in-as.js';
import { startTestApp, type TestApp } from './test-app.js';

let app: TestApp;

beforeAll(async () => {
  app = await startTestApp();
});
afterAll(() => app.close());

async function requestReset(email: string): Promise<string> {
  const res = await request(app.server).post('/api/auth/password-reset').send({ email });
  expect(res.status).toBe(202);
  const mail = await waitForMailTo(app.handle.db, email);
  expect(mail.subject).toBe('Reset your Poleward password');
  return tokenFromLink(mail.textBody, '/reset-password');
}

describe('password reset', () => {
  it('works exactly once, ends old sessions, and the new password signs in', async () => {
    const lab = await createLab(app.handle.db, ['designer']);
    const { email } = lab.as('designer');
    const oldSession = await signInAs(app, email);
    const token = await requestReset(email);

    const confirm = await request(app.server).post('/api/auth/password-reset/confirm').send({ token, password: 'brand-new-secret' });
    expect(confirm.status).toBe(204);

    const again = await request(app.server).post('/api/auth/password-reset/confirm').send({ token, password: 'another-new-secret' });
    expect(again.status).toBe(400);
    expect(again.body.code).toBe('token_invalid');

    const old = await request(app.server).post('/api/auth/sign-in').send({ email, password: fixturePassword });
    expect(old.status).toBe(401);
    const fresh = await signInAs(app, email, 'brand-new-secret');
    expect((await fresh.get('/api/auth/session')).status).toBe(200);
    expect((await oldSession.get('/api/auth/session')).status).toBe(401);
  });

  it('refuses an expired link with 400 token_invalid and leaves the password alone', async () => {
    const lab = await createLab(app.handle.db, ['viewer']);
    const { email, id } = lab.as('viewer');
    const token = await requestReset(email);
    await app.handle.pool.query("update password_reset_tokens set expires_at = now() - interval '1 second' where user_id = $1", [id]);
    const res = await request(app.server).post('/api/auth/password-reset/confirm').send({ token, password: 'too-late-secret' });
    expect(res.status).toBe(400);
    expect(res.body.code).toBe('token_invalid');
    await signInAs(app, email, fixturePassword);
  });

  it('a used link also voids the other open links of the account', async () => {
    const lab = await createLab(app.handle.db, ['viewer']);
    const { email } = lab.as('viewer');
    const first = await requestReset(email);
    await app.handle.pool.query('delete from outbox_messages where to_address = $1', [email]);
    const second = await requestReset(email);
    expect(second).not.toBe(first);
    expect((await request(app.server).post('/api/auth/password-reset/confirm').send({ token: second, password: 'second-link-secret' })).status).toBe(204);
    expect((await request(app.server).post('/api/auth/password-reset/confirm').send({ token: first, password: 'first-link-secret' })).status).toBe(400);
  });

  it('answers 202 for an unknown e-mail and sends nothing', async () => {
    const email = 'nobody.here@fixture.example';
    const res = await request(app.server).post('/api/auth/password-reset').send({ email });
    expect(res.status).toBe(202);
    await expect(waitForMailTo(app.handle.db, email, 500)).rejects.toThrow(/no mail/);
  });

  it('names the password field when the new one is too short', async () => {
    const res = await request(app.server).post('/api/auth/password-reset/confirm').send({ token: 'whatever', password: 'short' });
    expect(res.status).toBe(400);
    expect(res.body.issues).toEqual([{ path: 'password', message: 'must be at least 8 characters' }]);
  });
});
