// Route × caller access matrix, generated from the router itself: every route Express has
// mounted under /api is called as anonymous, as each role of a group (admin, designer,
// reviewer, viewer), as an admin of another group and as the site operator (a member of no
// group), and the answer must match the route's declared access rule (the `access` of its
// declaration in shared/api). A mounted route without a declaration fails here.
import { randomUUID } from 'node:crypto';
import type { Express } from 'express';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { outboxHidden } from '../../server/auth/require-operator.js';
import { groupNotFound } from '../../server/auth/require-role.js';
import type { Access } from '../../shared/api/enums.js';
import { apiRoutes } from '../../shared/api/routes.js';
import { createLab, type Lab } from './lab-fixture.js';
import { apiRoutesOf } from './mounted-routes.js';
import { signInAs, type SignedIn } from './sign-in-as.js';
import { startTestApp, type TestApp } from './test-app.js';

type Caller = 'anonymous' | 'admin' | 'designer' | 'reviewer' | 'viewer' | 'admin of another group' | 'site operator';
const callers: Caller[] = ['anonymous', 'admin', 'designer', 'reviewer', 'viewer', 'admin of another group', 'site operator'];

/** What a caller may expect: through the access check, or stopped by it (and how). */
type Outcome = 'passes' | 'unauthenticated' | 'forbidden' | 'hidden';

const groupRoles: Caller[] = ['admin', 'designer', 'reviewer', 'viewer'];

function expected(access: Access, caller: Caller): Outcome {
  if (access === 'public') return 'passes';
  if (caller === 'anonymous') return 'unauthenticated';
  switch (access) {
    case 'signed-in':
      return 'passes';
    case 'operator':
      return caller === 'site operator' ? 'passes' : 'hidden';
    case 'member':
    case 'designer':
    case 'analyst':
    case 'admin': {
      if (!groupRoles.includes(caller)) return 'hidden';
      const allowed: Record<typeof access, Caller[]> = {
        member: groupRoles,
        designer: ['admin', 'designer'],
        analyst: ['admin', 'designer', 'reviewer'],
        admin: ['admin'],
      };
      return allowed[access].includes(caller) ? 'passes' : 'forbidden';
    }
  }
}

const hiddenMessages = new Set([groupNotFound().message, outboxHidden().message]);

function outcomeOf(res: request.Response): Outcome | `unexpected ${number} ${string}` {
  const code = (res.body as { code?: string } | undefined)?.code;
  if (res.status >= 500 || code === 'csrf_failed') return `unexpected ${res.status} ${code ?? ''}`;
  if (res.status === 401 && code === 'unauthenticated') return 'unauthenticated';
  if (res.status === 403 && code === 'forbidden') return 'forbidden';
  if (res.status === 404 && hiddenMessages.has((res.body as { message?: string }).message ?? '')) return 'hidden';
  return 'passes';
}

/** A concrete URL for a route: the caller's group, and ids that exist nowhere (nothing is changed). */
function concrete(path: string, groupId: string): string {
  return path.replace(/\{(\w+)\}/g, (_m, name: string) => {
    if (name === 'groupId') return groupId;
    if (name === 'token') return 'no-such-link-token';
    if (name === 'version') return '1';
    return randomUUID();
  });
}

function ruleOf(route: string): Access | undefined {
  return apiRoutes.find((r) => `${r.method} /api${r.path}` === route)?.access;
}

/** Mounted /api routes that have no declared access rule. */
function routesWithoutRule(app: Express): string[] {
  return apiRoutesOf(app).filter((r) => ruleOf(r) === undefined);
}

let app: TestApp;
let lab: Lab;
let other: Lab;
const signedIn = new Map<Caller, SignedIn>();

beforeAll(async () => {
  app = await startTestApp();
  lab = await createLab(app.handle.db, ['admin', 'designer', 'reviewer', 'viewer']);
  other = await createLab(app.handle.db, ['admin', 'viewer']);
  for (const role of groupRoles) signedIn.set(role, await signInAs(app, lab.as(role as 'admin').email));
  signedIn.set('admin of another group', await signInAs(app, other.as('admin').email));
  // The operator is a member of no group: the role opens the outbox and nothing else.
  const operatorUser = other.as('viewer');
  await app.handle.pool.query('delete from memberships where user_id = $1', [operatorUser.id]);
  await app.handle.pool.query('update users set site_operator = true where id = $1', [operatorUser.id]);
  signedIn.set('site operator', await signInAs(app, operatorUser.email));
});
afterAll(() => app.close());

async function call(route: string, caller: Caller): Promise<request.Response> {
  const [method, path] = route.split(' ') as [string, string];
  const url = concrete(path, lab.groupId);
  // Signing out would end the caller's session for the rest of the matrix: use a fresh one.
  let who = caller === 'anonymous' ? undefined : signedIn.get(caller)!;
  if (who && route === 'post /api/auth/sign-out') who = await signInAs(app, who.session.user.email);
  const agent = who?.agent ?? request(app.server);
  let req = (agent as unknown as Record<string, (url: string) => request.Test>)[method]!.call(agent, url).timeout(10_000);
  if (who && method !== 'get') req = req.set('X-CSRF-Token', who.csrf);
  const res = await (method === 'get' || method === 'delete' ? req : req.send({}));
  // Signing out everywhere ends every session of the caller: sign in again for the rest of the matrix.
  if (who && caller !== 'anonymous' && route === 'post /api/account/sign-out-everywhere') signedIn.set(caller, await signInAs(app, who.session.user.email));
  return res;
}

describe('route × caller access matrix', () => {
  it('every mounted /api route has a declared access rule', () => {
    const running = app.server.listeners('request')[0] as Express;
    const routes = apiRoutesOf(running);
    expect(routes.length).toBeGreaterThan(40);
    expect(routesWithoutRule(running)).toEqual([]);
  });

  it('a route mounted without a rule is caught', async () => {
    const extra = await startTestApp({ mountFeatures: (api) => api.get('/groups/:groupId/unruled', (_req, res) => void res.json({ leaked: true })) });
    try {
      expect(routesWithoutRule(extra.server.listeners('request')[0] as Express)).toEqual(['get /api/groups/{groupId}/unruled']);
    } finally {
      await extra.close();
    }
  });

  it('answers every route as its rule says, for every caller', async () => {
    const running = app.server.listeners('request')[0] as Express;
    const mismatches: string[] = [];
    let checked = 0;
    for (const route of apiRoutesOf(running)) {
      const access = ruleOf(route)!;
      for (const caller of callers) {
        const res = await call(route, caller);
        const got = outcomeOf(res);
        const want = expected(access, caller);
        checked++;
        if (got !== want)
          mismatches.push(`${route} [${access}] as ${caller}: expected ${want}, got ${got} (${res.status} ${JSON.stringify(res.body).slice(0, 120)})`);
      }
    }
    expect(checked).toBe(apiRoutesOf(running).length * callers.length);
    expect(mismatches).toEqual([]);
  });

  it('a foreign group answers exactly like one that does not exist, on every group route', async () => {
    const admin = signedIn.get('admin')!;
    const groupRoutes = apiRoutesOf(app.server.listeners('request')[0] as Express).filter((r) => r.includes('{groupId}'));
    expect(groupRoutes.length).toBeGreaterThan(20);
    for (const route of groupRoutes) {
      const [method, path] = route.split(' ') as [string, string];
      const send = (admin.agent as unknown as Record<string, (u: string) => request.Test>)[method]!;
      const foreign = await send.call(admin.agent, concrete(path, other.groupId)).set('X-CSRF-Token', admin.csrf);
      const missing = await send.call(admin.agent, concrete(path, randomUUID())).set('X-CSRF-Token', admin.csrf);
      expect(foreign.status, route).toBe(404);
      expect(foreign.body, route).toEqual(missing.body);
    }
  });
});
