import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { demoAccounts, demoPassword, seedDemo } from '../../scripts/seed.js';
import { signInAs } from './sign-in-as.js';
import { startTestApp, testPasswordCost, type TestApp } from './test-app.js';

let app: TestApp;

beforeAll(async () => {
  app = await startTestApp();
});
afterAll(() => app.close());

async function counts() {
  const q = async (sql: string) => (await app.handle.pool.query(sql)).rows[0].n as number;
  return {
    groups: await q("select count(*)::int as n from research_groups where slug in ('harrow-lake', 'quarry-hill')"),
    users: await q("select count(*)::int as n from users where email like '%.example' and email not like '%@fixture.example'"),
    memberships: await q(
      "select count(*)::int as n from memberships m join research_groups g on g.id = m.group_id where g.slug in ('harrow-lake', 'quarry-hill')",
    ),
  };
}

describe('demo seed', () => {
  it('is idempotent and creates the two labs with their five accounts', async () => {
    const first = await seedDemo(app.handle.db, { passwordCost: testPasswordCost });
    const after1 = await counts();
    const second = await seedDemo(app.handle.db, { passwordCost: testPasswordCost });
    expect(await counts()).toEqual(after1);
    expect(after1).toEqual({ groups: 2, users: demoAccounts.length, memberships: demoAccounts.length });
    expect(second).toEqual(first);
  });

  it('lets the demo accounts sign in with the demo password and keeps the labs apart', async () => {
    await seedDemo(app.handle.db, { passwordCost: testPasswordCost });
    const ada = await signInAs(app, 'ada.admin@harrow-lake.example', demoPassword);
    expect(ada.session.user.name).toBe('Ada Marlow');
    expect(ada.session.groups).toEqual([{ id: expect.any(String), name: 'Harrow Lake Mesoscopics Lab', slug: 'harrow-lake', role: 'admin' }]);
    const members = (await ada.get(`/api/groups/${ada.session.groups[0]!.id}/members`)).body as { email: string; role: string }[];
    expect(members.map((m) => `${m.email}:${m.role}`).sort()).toEqual([
      'ada.admin@harrow-lake.example:admin',
      'dev.designer@harrow-lake.example:designer',
      'rae.reviewer@harrow-lake.example:reviewer',
      'vic.viewer@harrow-lake.example:viewer',
    ]);
    const quinn = await signInAs(app, 'quinn.admin@quarry-hill.example', demoPassword);
    expect(quinn.session.groups.map((g) => g.slug)).toEqual(['quarry-hill']);
    expect((await quinn.get(`/api/groups/${ada.session.groups[0]!.id}`)).status).toBe(404);
  });
});
