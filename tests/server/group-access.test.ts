import { randomUUID } from 'node:crypto';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createLab, type Lab } from './lab-fixture.js';
import { signInAs, type SignedIn } from './sign-in-as.js';
import { startTestApp, type TestApp } from './test-app.js';

let app: TestApp;
let labA: Lab;
let labB: Lab;
let adminA: SignedIn;

beforeAll(async () => {
  app = await startTestApp();
  labA = await createLab(app.handle.db, ['admin', 'designer', 'reviewer', 'viewer']);
  labB = await createLab(app.handle.db, ['admin', 'viewer']);
  adminA = await signInAs(app, labA.as('admin').email);
});
afterAll(() => app.close());

describe('group scoping', () => {
  it('lists only the groups the caller belongs to', async () => {
    const res = await adminA.get('/api/groups');
    expect(res.status).toBe(200);
    expect(res.body).toEqual([{ id: labA.groupId, name: labA.name, slug: expect.any(String), role: 'admin' }]);
  });

  it('shows a member the group with its member count', async () => {
    const viewer = await signInAs(app, labA.as('viewer').email);
    const res = await viewer.get(`/api/groups/${labA.groupId}`);
    expect(res.status).toBe(200);
    expect(res.body).toMatchObject({ id: labA.groupId, name: labA.name, role: 'viewer', memberCount: 4 });
  });

  it("answers 404 (never 403) for another group's group, members, activity and invitations", async () => {
    const paths = ['', '/members', '/activity', '/invitations'].map((p) => `/api/groups/${labB.groupId}${p}`);
    for (const path of paths) {
      const res = await adminA.get(path);
      expect(res.status, path).toBe(404);
      expect(res.body.code, path).toBe('not_found');
    }
  });

  it('answers a foreign group exactly like a group that does not exist', async () => {
    const foreign = await adminA.get(`/api/groups/${labB.groupId}/members`);
    const missing = await adminA.get(`/api/groups/${randomUUID()}/members`);
    const notUuid = await adminA.get('/api/groups/not-a-uuid/members');
    expect(missing.body).toEqual(foreign.body);
    expect(notUuid.body).toEqual(foreign.body);
  });

  it('cannot change, remove or invite in another group even as an admin elsewhere', async () => {
    const viewerB = labB.as('viewer').id;
    expect((await adminA.patch(`/api/groups/${labB.groupId}/members/${viewerB}`, { role: 'admin' })).status).toBe(404);
    expect((await adminA.delete(`/api/groups/${labB.groupId}/members/${viewerB}`)).status).toBe(404);
    expect((await adminA.post(`/api/groups/${labB.groupId}/invitations`, { email: 'x@fixture.example', role: 'admin' })).status).toBe(404);
    const still = await app.handle.pool.query('select role from memberships where group_id = $1 and user_id = $2', [labB.groupId, viewerB]);
    expect(still.rows).toEqual([{ role: 'viewer' }]);
  });

  it('requires sign-in for group routes', async () => {
    const res = await (await import('supertest')).default(app.server).get(`/api/groups/${labA.groupId}`);
    expect(res.status).toBe(401);
  });
});

describe('roles', () => {
  it('answers 403 forbidden when a viewer invites (admin only)', async () => {
    const viewer = await signInAs(app, labA.as('viewer').email);
    const res = await viewer.post(`/api/groups/${labA.groupId}/invitations`, { email: 'new.person@fixture.example', role: 'viewer' });
    expect(res.status).toBe(403);
    expect(res.body).toMatchObject({ code: 'forbidden' });
    expect(res.body.message).toMatch(/admin role.*you are viewer/);
  });

  it('lets every member read the members list, but only admins change roles', async () => {
    for (const role of ['designer', 'reviewer', 'viewer'] as const) {
      const me = await signInAs(app, labA.as(role).email);
      const list = await me.get(`/api/groups/${labA.groupId}/members`);
      expect(list.status, role).toBe(200);
      expect(list.body).toHaveLength(4);
      const patch = await me.patch(`/api/groups/${labA.groupId}/members/${labA.as('viewer').id}`, { role: 'designer' });
      expect(patch.status, role).toBe(403);
    }
    const members = (await adminA.get(`/api/groups/${labA.groupId}/members`)).body as {
      userId: string;
      role: string;
      email: string;
      name: string;
      joinedAt: string;
    }[];
    expect(members.find((m) => m.userId === labA.as('viewer').id)).toEqual({
      userId: labA.as('viewer').id,
      email: labA.as('viewer').email,
      name: labA.as('viewer').name,
      role: 'viewer',
      joinedAt: expect.stringMatching(/^\d{4}-\d\d-\d\dT/),
    });
  });
});
