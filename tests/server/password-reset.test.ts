import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import pg from 'pg';
import { countingHasher } from './counting-hasher.js';
import { createLab, fixturePassword } from './lab-fixture.js';
import { tokenFromLink, waitForMailTo } from './outbox-wait.js';
import { signInAs } from './sign-in-as.js';
import { startTestApp, testDatabaseUrl, type TestApp } from './test-app.js';

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

  it('says in the e-mail that a reset ends every session and revokes the API tokens', async () => {
    const lab = await createLab(app.handle.db, ['viewer']);
    const { email } = lab.as('viewer');
    await requestReset(email);
    const mail = await waitForMailTo(app.handle.db, email);
    expect(mail.textBody).toMatch(/signs out every session.*revokes your personal API tokens/s);
    expect(mail.htmlBody).toMatch(/revokes your personal API tokens/);
  });
});

describe('a password reset revokes what the old password could have made', () => {
  it('revokes every personal API token of the account and records how many', async () => {
    const lab = await createLab(app.handle.db, ['designer', 'viewer']);
    const { email, id } = lab.as('designer');
    const me = await signInAs(app, email);
    const made = await me.post('/api/tokens', { name: 'notebook' });
    expect(made.status).toBe(201);
    const bearer = () => request(app.server).get('/api/groups').set('Authorization', `Bearer ${made.body.token}`);
    expect((await bearer()).status).toBe(200);
    // Someone else's token is left alone.
    const other = await (await signInAs(app, lab.as('viewer').email)).post('/api/tokens', { name: 'theirs' });

    const token = await requestReset(email);
    expect((await request(app.server).post('/api/auth/password-reset/confirm').send({ token, password: 'after-the-reset' })).status).toBe(204);

    const after = await bearer();
    expect(after.status).toBe(401);
    expect(after.body.message).toMatch(/revoked/);
    expect((await request(app.server).get('/api/groups').set('Authorization', `Bearer ${other.body.token}`)).status).toBe(200);
    const audit = await app.handle.pool.query("select details from audit_log where account_id = $1 and action = 'auth.password_reset'", [id]);
    expect(audit.rows[0].details).toEqual({ sessionsEnded: 1, tokensRevoked: 1 });
  });
});

describe('password-reset confirmation against anonymous abuse', () => {
  it('checks the link before hashing: an unknown link costs no bcrypt work', async () => {
    const hasher = countingHasher();
    const counted = await startTestApp({ passwords: hasher });
    try {
      const res = await request(counted.server)
        .post('/api/auth/password-reset/confirm')
        .send({ token: 'not-a-real-link-token', password: 'some-new-password' });
      expect(res.status).toBe(400);
      expect(res.body.code).toBe('token_invalid');
      expect(hasher.calls).toEqual({ hash: 0, verify: 0 });
    } finally {
      await counted.close();
    }
  });

  it('limits failed confirmations per address with 429', async () => {
    const limited = await startTestApp({ linkLimit: { max: 2, windowMs: 60_000 } });
    try {
      const statuses: number[] = [];
      for (let i = 0; i < 3; i++) {
        statuses.push(
          (
            await request(limited.server)
              .post('/api/auth/password-reset/confirm')
              .send({ token: `guess-${i}`, password: 'some-new-password' })
          ).status,
        );
      }
      expect(statuses).toEqual([400, 400, 429]);
    } finally {
      await limited.close();
    }
  });
});

describe('password-reset request timing', () => {
  it('answers a known e-mail without waiting for the reset work (the same path as an unknown one)', async () => {
    const lab = await createLab(app.handle.db, ['viewer']);
    const { email } = lab.as('viewer');
    // Hold the reset-token table: work done before answering would wait behind this lock.
    const blocker = new pg.Client({ connectionString: testDatabaseUrl() });
    await blocker.connect();
    try {
      await blocker.query('begin');
      await blocker.query('lock table password_reset_tokens in access exclusive mode');
      const res = await request(app.server).post('/api/auth/password-reset').send({ email }).timeout(5000);
      expect(res.status).toBe(202);
      await expect(waitForMailTo(app.handle.db, email, 300)).rejects.toThrow(/no mail/);
    } finally {
      await blocker.query('rollback');
      await blocker.end();
    }
    // Once the table is free the work goes on, and the link arrives.
    const mail = await waitForMailTo(app.handle.db, email);
    expect(tokenFromLink(mail.textBody, '/reset-password')).toMatch(/\S{20,}/);
  });
});
