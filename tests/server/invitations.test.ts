import { eq } from 'drizzle-orm';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { outboxMessages } from '../../server/db/schema/outbox.js';
import { countingHasher } from './counting-hasher.js';
import { createLab, fixturePassword, type Lab } from './lab-fixture.js';
import { tokenFromLink } from './outbox-wait.js';
import { signInAs, wrapAgent, type SignedIn } from './sign-in-as.js';
import { startTestApp, type TestApp } from './test-app.js';

let app: TestApp;
let lab: Lab;
let admin: SignedIn;
let counter = 0;

beforeAll(async () => {
  app = await startTestApp();
  lab = await createLab(app.handle.db, ['admin', 'designer']);
  admin = await signInAs(app, lab.as('admin').email);
});
afterAll(() => app.close());

function newAddress(): string {
  return `invitee${++counter}.${lab.groupId.slice(0, 8)}@fixture.example`;
}

/** Invites by the API and returns the token read from the e-mail the stand-in received. */
async function inviteAndReadMail(email: string, role: string): Promise<{ token: string; id: string; text: string }> {
  const res = await admin.post(`/api/groups/${lab.groupId}/invitations`, { email, role });
  expect(res.status, JSON.stringify(res.body)).toBe(201);
  // invite awaits the SMTP exchange, and the stand-in stores before answering: no waiting needed.
  const [mail] = await app.handle.db.select().from(outboxMessages).where(eq(outboxMessages.toAddress, email));
  expect(mail, 'the invitation reached the stand-in').toBeDefined();
  return { token: tokenFromLink(mail!.textBody, '/invitation'), id: res.body.id, text: mail!.textBody };
}

describe('invitations', () => {
  it('e-mails a link through the SMTP stand-in; accepting creates the account with the invited role', async () => {
    const email = newAddress();
    const { token, text } = await inviteAndReadMail(email, 'reviewer');
    expect(text).toContain(lab.as('admin').name);
    expect(text).toContain(lab.name);
    expect(text).toContain('http://127.0.0.1:8640/invitation?token=');

    const preview = await request(app.server).get(`/api/invitations/${token}`);
    expect(preview.status).toBe(200);
    expect(preview.body).toEqual({ email, groupName: lab.name, role: 'reviewer', invitedBy: lab.as('admin').name });

    const agent = request.agent(app.server);
    const accepted = await agent.post(`/api/invitations/${token}/accept`).send({ name: 'Nadia Ferreira', password: 'a-new-password' });
    expect(accepted.status).toBe(201);
    expect(accepted.body.user).toMatchObject({ email, name: 'Nadia Ferreira' });
    expect(accepted.body.groups).toEqual([{ id: lab.groupId, name: lab.name, slug: expect.any(String), role: 'reviewer' }]);

    // Signed in by the acceptance, and the new password works on its own.
    const me = wrapAgent(agent, accepted.body);
    expect((await me.get(`/api/groups/${lab.groupId}`)).body.role).toBe('reviewer');
    await signInAs(app, email, 'a-new-password');

    const members = (await admin.get(`/api/groups/${lab.groupId}/members`)).body as { email: string; role: string }[];
    expect(members.find((m) => m.email === email)?.role).toBe('reviewer');
    const activity = (await admin.get(`/api/groups/${lab.groupId}/activity`)).body as { action: string; subject: string }[];
    expect(activity.slice(0, 2).map((a) => a.action)).toEqual(['invitation.accepted', 'invitation.created']);
  });

  it('works once: a second accept and a later preview answer 410', async () => {
    const { token } = await inviteAndReadMail(newAddress(), 'viewer');
    expect((await request(app.server).post(`/api/invitations/${token}/accept`).send({ name: 'Once', password: 'password-once' })).status).toBe(201);
    const again = await request(app.server).post(`/api/invitations/${token}/accept`).send({ name: 'Twice', password: 'password-twice' });
    expect(again.status).toBe(410);
    expect(again.body.code).toBe('invitation_gone');
    expect((await request(app.server).get(`/api/invitations/${token}`)).status).toBe(410);
  });

  it('answers 404 for an unknown token and 410 for an expired or revoked one', async () => {
    expect((await request(app.server).get('/api/invitations/no-such-token')).status).toBe(404);

    const expired = await inviteAndReadMail(newAddress(), 'viewer');
    await app.handle.pool.query("update invitations set expires_at = now() - interval '1 second' where id = $1", [expired.id]);
    const e = await request(app.server).get(`/api/invitations/${expired.token}`);
    expect(e.status).toBe(410);
    expect(e.body.message).toMatch(/expired/);

    const revoked = await inviteAndReadMail(newAddress(), 'viewer');
    expect((await admin.delete(`/api/groups/${lab.groupId}/invitations/${revoked.id}`)).status).toBe(204);
    const r = await request(app.server).post(`/api/invitations/${revoked.token}/accept`).send({ name: 'Late', password: 'password-late' });
    expect(r.status).toBe(410);
    expect(r.body.message).toMatch(/withdrawn/);
  });

  it('lists open invitations to admins, and a new invitation replaces the open one for the same e-mail', async () => {
    const email = newAddress();
    const first = await inviteAndReadMail(email, 'viewer');
    const second = await inviteAndReadMail(email, 'designer');
    const list = (await admin.get(`/api/groups/${lab.groupId}/invitations`)).body as { id: string; email: string; role: string; status: string }[];
    const forEmail = list.filter((i) => i.email === email);
    expect(forEmail).toEqual([expect.objectContaining({ id: second.id, role: 'designer', status: 'pending' })]);
    expect((await request(app.server).get(`/api/invitations/${first.token}`)).status).toBe(410);
  });

  it('adds the membership to an existing account only with that account’s password', async () => {
    const other = await createLab(app.handle.db, ['viewer']);
    const existing = other.as('viewer');
    const { token } = await inviteAndReadMail(existing.email, 'designer');
    const wrong = await request(app.server).post(`/api/invitations/${token}/accept`).send({ name: 'Ignored', password: 'not-their-password' });
    expect(wrong.status).toBe(401);
    expect(wrong.body.code).toBe('invalid_credentials');
    const right = await request(app.server).post(`/api/invitations/${token}/accept`).send({ name: 'Ignored', password: fixturePassword });
    expect(right.status).toBe(201);
    expect(right.body.user).toEqual({ id: existing.id, email: existing.email, name: existing.name });
    expect(right.body.groups.map((g: { id: string; role: string }) => [g.id, g.role]).sort()).toEqual(
      [
        [lab.groupId, 'designer'],
        [other.groupId, 'viewer'],
      ].sort(),
    );
  });

  it('refuses to invite an existing member (409) and names bad fields (400)', async () => {
    const dup = await admin.post(`/api/groups/${lab.groupId}/invitations`, { email: lab.as('designer').email.toUpperCase(), role: 'viewer' });
    expect(dup.status).toBe(409);
    expect(dup.body.code).toBe('already_member');
    const bad = await admin.post(`/api/groups/${lab.groupId}/invitations`, { email: 'not-an-address', role: 'owner' });
    expect(bad.status).toBe(400);
    expect(bad.body.code).toBe('validation_failed');
    expect(bad.body.issues.map((i: { path: string }) => i.path).sort()).toEqual(['email', 'role']);
    expect(bad.body.message).toMatch(/email/);
  });

  it('names a too-short password when accepting', async () => {
    const { token } = await inviteAndReadMail(newAddress(), 'viewer');
    const res = await request(app.server).post(`/api/invitations/${token}/accept`).send({ name: '', password: 'short' });
    expect(res.status).toBe(400);
    expect(res.body.issues).toEqual([
      { path: 'name', message: 'must not be empty' },
      { path: 'password', message: 'must be at least 8 characters' },
    ]);
  });
});

describe('invitation acceptance against anonymous abuse', () => {
  it('checks the link before any password work: an unknown or used link costs no bcrypt', async () => {
    const hasher = countingHasher();
    const counted = await startTestApp({ passwords: hasher });
    try {
      const unknown = await request(counted.server)
        .post('/api/invitations/no-such-link-token/accept')
        .send({ name: 'Mallory', password: 'long-enough-password' });
      expect(unknown.status).toBe(404);
      const { token } = await inviteAndReadMail(newAddress(), 'viewer');
      expect((await request(counted.server).post(`/api/invitations/${token}/accept`).send({ name: 'First', password: 'long-enough-password' })).status).toBe(
        201,
      );
      expect(hasher.calls).toEqual({ hash: 1, verify: 0 });
      const reused = await request(counted.server).post(`/api/invitations/${token}/accept`).send({ name: 'Second', password: 'long-enough-password' });
      expect(reused.status).toBe(410);
      expect(hasher.calls).toEqual({ hash: 1, verify: 0 });
    } finally {
      await counted.close();
    }
  });

  it('limits failed acceptances per address with 429, and records a wrong password on the account', async () => {
    const limited = await startTestApp({ linkLimit: { max: 2, windowMs: 60_000 } });
    try {
      const other = await createLab(app.handle.db, ['viewer']);
      const { token } = await inviteAndReadMail(other.as('viewer').email, 'viewer');
      const statuses: number[] = [];
      for (let i = 0; i < 3; i++) {
        statuses.push(
          (
            await request(limited.server)
              .post(`/api/invitations/${token}/accept`)
              .send({ name: 'X', password: `guess-number-${i}` })
          ).status,
        );
      }
      expect(statuses).toEqual([401, 401, 429]);
      const failed = await app.handle.pool.query("select group_id from audit_log where account_id = $1 and action = 'auth.sign_in_failed'", [
        other.as('viewer').id,
      ]);
      expect(failed.rows).toEqual([{ group_id: lab.groupId }, { group_id: lab.groupId }]);
    } finally {
      await limited.close();
    }
  });
});
