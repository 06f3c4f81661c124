import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createLab } from './lab-fixture.js';
import { signInAs } from './sign-in-as.js';
import { startTestApp, type TestApp } from './test-app.js';

let app: TestApp;

beforeAll(async () => {
  app = await startTestApp();
});
afterAll(() => app.close());

describe('last admin rule', () => {
  it('refuses to demote or remove the only admin with 409 last_admin', async () => {
    const lab = await createLab(app.handle.db, ['admin', 'designer']);
    const admin = await signInAs(app, lab.as('admin').email);
    const self = `/api/groups/${lab.groupId}/members/${lab.as('admin').id}`;
    const demote = await admin.patch(self, { role: 'designer' });
    expect(demote.status).toBe(409);
    expect(demote.body.code).toBe('last_admin');
    const remove = await admin.delete(self);
    expect(remove.status).toBe(409);
    const rows = await app.handle.pool.query('select role from memberships where group_id = $1 and user_id = $2', [lab.groupId, lab.as('admin').id]);
    expect(rows.rows).toEqual([{ role: 'admin' }]);
    // Keeping the role is not a demotion.
    expect((await admin.patch(self, { role: 'admin' })).status).toBe(200);
  });

  it('allows demoting one of two admins, then protects the remaining one', async () => {
    const lab = await createLab(app.handle.db, ['admin', 'admin', 'viewer']);
    const [first, second] = lab.members;
    const a = await signInAs(app, first!.email);
    const res = await a.patch(`/api/groups/${lab.groupId}/members/${second!.id}`, { role: 'reviewer' });
    expect(res.status).toBe(200);
    expect(res.body).toMatchObject({ userId: second!.id, role: 'reviewer' });
    expect((await a.patch(`/api/groups/${lab.groupId}/members/${first!.id}`, { role: 'viewer' })).status).toBe(409);
  });

  it('does not lose the last admin when two admins demote each other at the same moment', async () => {
    const lab = await createLab(app.handle.db, ['admin', 'admin']);
    const [x, y] = lab.members;
    const ax = await signInAs(app, x!.email);
    const ay = await signInAs(app, y!.email);
    const results = await Promise.all([
      ax.patch(`/api/groups/${lab.groupId}/members/${y!.id}`, { role: 'viewer' }),
      ay.patch(`/api/groups/${lab.groupId}/members/${x!.id}`, { role: 'viewer' }),
    ]);
    const statuses = results.map((r) => r.status).sort();
    // One of them may be refused as no longer admin (403) or as last admin (409); never both succeed.
    expect(statuses[0]).toBe(200);
    expect([403, 409]).toContain(statuses[1]);
    const admins = await app.handle.pool.query("select count(*)::int as n from memberships where group_id = $1 and role = 'admin'", [lab.groupId]);
    expect(admins.rows[0].n).toBe(1);
  });

  it('removes a member, who then gets 404 for the group', async () => {
    const lab = await createLab(app.handle.db, ['admin', 'viewer']);
    const admin = await signInAs(app, lab.as('admin').email);
    const viewer = await signInAs(app, lab.as('viewer').email);
    expect((await viewer.get(`/api/groups/${lab.groupId}`)).status).toBe(200);
    expect((await admin.delete(`/api/groups/${lab.groupId}/members/${lab.as('viewer').id}`)).status).toBe(204);
    expect((await viewer.get(`/api/groups/${lab.groupId}`)).status).toBe(404);
    expect((await admin.delete(`/api/groups/${lab.groupId}/members/${lab.as('viewer').id}`)).status).toBe(404);
  });
});

describe('activity', () => {
  it('records role changes and removals with actor, newest first, and honours limit', async () => {
    const lab = await createLab(app.handle.db, ['admin', 'designer', 'viewer']);
    const admin = await signInAs(app, lab.as('admin').email);
    await admin.patch(`/api/groups/${lab.groupId}/members/${lab.as('viewer').id}`, { role: 'reviewer' });
    await admin.delete(`/api/groups/${lab.groupId}/members/${lab.as('designer').id}`);
    const res = await admin.get(`/api/groups/${lab.groupId}/activity?limit=20`);
    expect(res.status).toBe(200);
    expect(res.body.map((e: { action: string }) => e.action)).toEqual(['member.removed', 'member.role_changed']);
    expect(res.body[1]).toEqual({
      id: expect.any(String),
      at: expect.any(String),
      actor: { id: lab.as('admin').id, name: lab.as('admin').name },
      action: 'member.role_changed',
      subject: lab.as('viewer').email,
      details: { userId: lab.as('viewer').id, from: 'viewer', to: 'reviewer' },
    });
    const one = await admin.get(`/api/groups/${lab.groupId}/activity?limit=1`);
    expect(one.body).toHaveLength(1);
    expect(one.body[0].action).toBe('member.removed');
  });

  it('names the field when limit is out of range', async () => {
    const lab = await createLab(app.handle.db, ['viewer']);
    const viewer = await signInAs(app, lab.as('viewer').email);
    const res = await viewer.get(`/api/groups/${lab.groupId}/activity?limit=0`);
    expect(res.status).toBe(400);
    expect(res.body.code).toBe('validation_failed');
    expect(res.body.issues).toEqual([{ path: 'query.limit', message: expect.any(String) }]);
  });
});
