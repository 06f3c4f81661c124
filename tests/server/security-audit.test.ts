// Security events in the audit log: who sees which. Account entries go to the person
// concerned; entries in a group go to its activity, refusals there to its admins only.
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createLab, type Lab } from './lab-fixture.js';
import { signInAs, type SignedIn } from './sign-in-as.js';
import { startTestApp, type TestApp } from './test-app.js';

interface Entry {
  action: string;
  subject: string;
  actor: { id: string; name: string } | null;
  details: Record<string, unknown>;
}

let app: TestApp;
let lab: Lab;
let admin: SignedIn;
let viewer: SignedIn;

beforeAll(async () => {
  app = await startTestApp();
  lab = await createLab(app.handle.db, ['admin', 'designer', 'viewer']);
  admin = await signInAs(app, lab.as('admin').email);
  viewer = await signInAs(app, lab.as('viewer').email);
});
afterAll(() => app.close());

describe('account activity', () => {
  it("lists the caller's own sign-ins, sign-outs and token changes, and nobody else's", async () => {
    const designer = lab.as('designer');
    const first = await signInAs(app, designer.email);
    await first.post('/api/tokens', { name: 'lab notebook' });
    await first.post('/api/auth/sign-out');
    await request(app.server).post('/api/auth/sign-in').send({ email: designer.email, password: 'not-the-password' });
    const me = await signInAs(app, designer.email);
    const res = await me.get('/api/account/activity?limit=50');
    expect(res.status).toBe(200);
    const actions = (res.body as Entry[]).map((e) => e.action);
    expect(actions.slice(0, 5)).toEqual(['auth.signed_in', 'auth.sign_in_failed', 'auth.signed_out', 'api_token.created', 'auth.signed_in']);
    const failed = (res.body as Entry[]).find((e) => e.action === 'auth.sign_in_failed')!;
    expect(failed.actor).toBeNull();
    expect(failed.details.ip).toEqual(expect.any(String));
    const others = ((await viewer.get('/api/account/activity?limit=200')).body as Entry[]).map((e) => e.subject);
    expect(others).not.toContain(designer.email);
    expect((await request(app.server).get('/api/account/activity')).status).toBe(401);
  });

  it('shows a member that an admin changed their role', async () => {
    const target = lab.as('viewer');
    expect((await admin.patch(`/api/groups/${lab.groupId}/members/${target.id}`, { role: 'reviewer' })).status).toBe(200);
    await admin.patch(`/api/groups/${lab.groupId}/members/${target.id}`, { role: 'viewer' });
    const entries = (await viewer.get('/api/account/activity')).body as Entry[];
    expect(entries.filter((e) => e.action === 'member.role_changed').map((e) => e.details.to)).toEqual(['viewer', 'reviewer']);
  });
});

describe('refusals and exports in the group activity', () => {
  it('records a CSRF refusal on a group route, for the group admins and the account', async () => {
    const res = await viewer.agent.post(`/api/groups/${lab.groupId}/models/validate`).send({ document: {} });
    expect(res.status).toBe(403);
    expect(res.body.code).toBe('csrf_failed');
    const seen = (await admin.get(`/api/groups/${lab.groupId}/activity?limit=50`)).body as Entry[];
    const refusal = seen.find((e) => e.action === 'security.csrf_refused')!;
    expect(refusal).toMatchObject({ subject: `POST /api/groups/${lab.groupId}/models/validate`, actor: { id: lab.as('viewer').id } });
    // Other members do not see refusals in the group list; the person concerned sees it on the account page.
    const forViewer = (await viewer.get(`/api/groups/${lab.groupId}/activity?limit=50`)).body as Entry[];
    expect(forViewer.some((e) => e.action.startsWith('security.'))).toBe(false);
    expect(((await viewer.get('/api/account/activity')).body as Entry[]).some((e) => e.action === 'security.csrf_refused')).toBe(true);
  });

  it('records catalogue exports with the filter', async () => {
    const res = await viewer.get(`/api/groups/${lab.groupId}/catalogue/export.csv?emin=1&emax=4`);
    expect(res.status).toBe(200);
    const entries = (await viewer.get(`/api/groups/${lab.groupId}/activity`)).body as Entry[];
    const exported = entries.find((e) => e.action === 'catalogue.exported')!;
    expect(exported).toMatchObject({ subject: 'catalogue.csv', actor: { id: lab.as('viewer').id } });
    expect(exported.details.filter).toMatchObject({ emin: 1, emax: 4 });
  });
});
